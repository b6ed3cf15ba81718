"""Twin tests: every fast path of the engine against its plain reference on the same networks.

Paths: the compiled kernel (modal coordinates, ``kernel="numba"``) against the numpy
reference loop (node coordinates, dense exact steps, ``kernel="numpy"``); the batch path
(sums inside the compiled loop) against the reference's hourly traces summed afterwards; the
sparse method (sparse LDLᵀ and, forced, SuperLU factorisations) against the exact method. Cases:
free-running, one thermostat with a capacity limit, several thermostats, switches with
hysteresis, scheduled conductances and setpoints, massless nodes, a stiff node.

The reference of each comparison is another implementation of the same exact
zero-order-hold step (Franklin, Powell & Workman, Digital Control of Dynamic Systems, 1998,
§4.3), so agreement is to rounding (1e-9 K here; measured ~1e-12 K). The energy balance of
every run closes to 1e-9 of its largest term (measured ~1e-13).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.engine import sparse as sparse_mod
from thermonet.engine.batch import run_batch

TZ = "Etc/GMT-1"
HOURS = 24 * 8
IDX = pd.date_range("2025-06-01 01:00", periods=HOURS, freq="h", tz=TZ)
_t = np.arange(HOURS)
WEATHER = pd.DataFrame({
    "temp_air": 16 + 9 * np.sin(2 * np.pi * (_t - 9) / 24)
    + np.random.default_rng(1).normal(0, 0.7, HOURS)}, index=IDX)
SOLAR = pd.Series(np.clip(900 * np.sin(2 * np.pi * (_t - 6) / 24), 0, None), index=IDX)
SCHED = pd.Series(np.where(IDX.hour.isin(range(8, 18)), 25.0, 8.0), index=IDX)
SETPOINT = pd.Series(np.where(IDX.hour.isin(range(6, 22)), 21.0, 17.0), index=IDX)


def network(case: str, scale: float = 1.0) -> tn.Network:
    """Two rooms, a wall, a massless glazing surface; ``case`` adds controls."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("ground", temperature=11.0)
    net.add_node("a", kind="air", capacitance=1.4e5)
    net.add_node("b", kind="air", capacitance=0.9e5)
    net.add_node("wall", kind="mass", capacitance=5e6 * scale)
    net.add_node("glass", kind="surface", capacitance=0.0)
    net.add_link("a", "wall", conductance=120.0, path="internal")
    net.add_link("wall", "out", conductance=30.0 * scale, path="opaque")
    net.add_link("a", "glass", conductance=40.0, path="glazing")
    net.add_link("glass", "out", conductance=60.0, path="glazing")
    net.add_link("a", "b", conductance=25.0, path="internal")
    net.add_link("b", "ground", conductance=12.0, path="ground")
    solar = net.add_source("glass", power=SOLAR * 2.0 * scale, path="solar")
    net.add_source("b", power=120.0, path="internal")
    if case == "stiff":
        net.add_node("skin", kind="surface", capacitance=1e-3)
        net.add_link("a", "skin", conductance=1e5, path="internal")
        net.add_link("skin", "wall", conductance=50.0, path="internal")
    if case in ("one", "several", "switched", "scheduled"):
        net.add_thermostat("a", heating_setpoint=SETPOINT if case == "scheduled" else 20.0,
                           cooling_setpoint=25.0, max_heating_w=300.0, max_cooling_w=100.0)
    if case == "several":
        net.add_thermostat("b", heating_setpoint=21.5, max_heating_w=60.0)
        net.add_thermostat("glass", cooling_setpoint=27.0, max_cooling_w=200.0)
    if case == "switched":
        win = net.add_airflow("out", "a", flow_m3h=250.0, path="window", name="win")
        net.add_switch(on=tn.above("a", 23.0) & tn.warmer("a", "out", 1.0) & tn.hours(7, 23),
                       off=tn.below("a", 21.5), links={win: (0.0, 1.0)})
        net.add_switch(on=tn.above("glass", 26.0), off=tn.below("glass", 24.0),
                       sources={solar: (1.0, 0.3)})
    if case == "scheduled":
        net.add_airflow("out", "b", flow_m3h=SCHED, path="ventilation")
    return net


CASES = ["free", "one", "several", "switched", "scheduled", "stiff"]


def close_balance(res, nodes):
    b = res.balance_w(nodes)
    scale = b.drop(columns="residual").abs().to_numpy().max()
    assert b["residual"].abs().max() <= 1e-9 * scale


@pytest.mark.parametrize("case", CASES)
def test_compiled_kernel_equals_numpy_reference(case):
    net = network(case)
    fast = tn.simulate(net, WEATHER, warmup_days=2, kernel="numba")
    ref = tn.simulate(net, WEATHER, warmup_days=2, kernel="numpy")
    np.testing.assert_allclose(fast.temperatures, ref.temperatures, rtol=0, atol=1e-9)
    np.testing.assert_allclose(fast.mean_temperatures, ref.mean_temperatures, rtol=0,
                               atol=1e-9)
    np.testing.assert_allclose(fast.flows, ref.flows, rtol=1e-9, atol=1e-7)
    np.testing.assert_allclose(fast.heating, ref.heating, rtol=1e-9, atol=1e-6)
    np.testing.assert_allclose(fast.cooling, ref.cooling, rtol=1e-9, atol=1e-6)
    for res in (fast, ref):
        close_balance(res, list(net.nodes))
        close_balance(res, ["a"])
    if case == "one":        # both capacity limits bind in this week
        assert fast.heating.max() == 300.0 and fast.cooling.max() == 100.0
    if case == "switched":   # the window and the blind both act in this week
        assert fast.flows["win"].abs().max() > 0 and (fast.flows["win"] == 0).any()
    if case == "several":
        active = fast.heating_by_thermostat.max() + fast.cooling_by_thermostat.max()
        assert (active > 0).all()
        assert fast.cooling_by_thermostat["thermostat:glass"].max() == 200.0  # at capacity


@pytest.mark.parametrize("case", CASES)
def test_batch_kernel_equals_reference_and_single_runs(case):
    nets = [network(case, scale) for scale in (0.7, 1.0, 1.6)]
    opts = dict(warmup_days=2, comfort_node="a", hours_above=(22.0,),
                degree_hours_above=(21.0,),
                balance_nodes={"a": ["a"], "all": list(nets[0].nodes)}, link_energy=True)
    fast = run_batch(nets, WEATHER, **opts)
    ref = run_batch(nets, WEATHER, kernel="numpy", **opts)
    assert all(e is None for e in fast.errors + ref.errors)
    pd.testing.assert_index_equal(fast.table.columns, ref.table.columns)
    np.testing.assert_allclose(fast.table.to_numpy(), ref.table.to_numpy(), rtol=1e-9,
                               atol=1e-9)
    for v, net in enumerate(nets):     # and a variant alone equals the variant in the batch
        res = tn.simulate(net, WEATHER, warmup_days=2)
        for k, val in res.balance(list(net.nodes)).sum().items():
            assert abs(fast.table.at[v, f"balance[all]:{k}"] - val) <= 1e-9 * max(1, abs(val))
        heat = res.summary()["heating_kwh"]
        assert abs(fast.table.at[v, "heating_kwh"] - heat) <= 1e-9 * max(1.0, heat)


@pytest.mark.parametrize("case", ["free", "one", "several", "switched", "scheduled"])
@pytest.mark.parametrize("superlu", [False, True])
def test_sparse_method_equals_exact(case, superlu, monkeypatch):
    if superlu:   # force the general sparse LU instead of the LDLᵀ factorisation
        monkeypatch.setattr(sparse_mod, "MAX_FILL", -1)
    net = network(case)
    exact = tn.simulate(net, WEATHER, warmup_days=2, method="exact")
    sp = tn.simulate(net, WEATHER, warmup_days=2, method="sparse", sparse_tol=1e-9)
    # error bound of the rational exponential (Trefethen, Weideman & Schmelzer 2006) at the
    # requested 1e-9, amplified by the thermostats' superposition: well below 1e-6 K
    np.testing.assert_allclose(sp.temperatures, exact.temperatures, rtol=0, atol=1e-6)
    np.testing.assert_allclose(sp.heating, exact.heating, rtol=0, atol=1e-3)
    close_balance(sp, list(net.nodes))
    close_balance(sp, ["a", "wall"])


def test_first_run_steps_with_the_reference_while_the_kernel_compiles(monkeypatch):
    """In a fresh process (compiled kernel not built yet) a single small run is stepped by
    the numpy reference and the compiled kernel is built in the background; the numbers are
    those of the compiled kernel to rounding."""
    from thermonet.engine import run as engine_run

    jobs = []
    monkeypatch.setattr(engine_run, "kernel_ready", lambda: False)
    monkeypatch.setattr(engine_run, "compile_in_background", jobs.append)
    net = network("switched")
    first = tn.simulate(net, WEATHER, warmup_days=2)
    assert first.info["kernel_used"] == "numpy" and len(jobs) == 1
    compiled = tn.simulate(net, WEATHER, warmup_days=2, kernel="numba")
    assert compiled.info["kernel_used"] == "numba"
    np.testing.assert_allclose(first.temperatures, compiled.temperatures, rtol=0, atol=1e-9)
    jobs[0]()          # the background job itself runs the compiled kernel on a copy


@pytest.mark.parametrize("case", ["free", "one"])
def test_lane_kernel_is_bit_identical_to_the_variant_kernel(case, monkeypatch):
    # Groups in one state with at most one thermostat step on SIMD lanes (16 variants a
    # block, kernels.step_lanes); the same operations in the same order as the per-variant
    # kernel, so every sum must agree bit for bit — including the pad lanes of a last,
    # partial block (37 variants) and a thermostat that hits both capacities.
    from thermonet.engine import kernels
    from thermonet.engine import run as run_mod

    nets = [network(case, scale=0.5 + 0.04 * k) for k in range(37)]
    opts = dict(warmup_days=1, comfort_node="a", hours_above=(24.0, 26.0),
                degree_hours_above=(25.0,), balance_nodes=["a", "b"], link_energy=True)
    calls = []
    lane_kernel = kernels.step_lanes_nb
    monkeypatch.setattr(kernels, "step_lanes_nb",
                        lambda *a: calls.append(a[0]) or lane_kernel(*a))
    lanes = run_batch(nets, WEATHER, **opts).table
    assert calls, "the lane kernel was not used"
    monkeypatch.setattr(run_mod, "LANES_MIN", 10**9)            # per-variant kernel
    plain = run_batch(nets, WEATHER, **opts).table
    assert list(lanes.columns) == list(plain.columns)
    for col in lanes.columns:
        assert np.array_equal(lanes[col].to_numpy(), plain[col].to_numpy(), equal_nan=True), col
    if case == "one":
        assert (lanes["peak_heating_w"] == 300.0).any() and (lanes["cooling_kwh"] > 0).any()
