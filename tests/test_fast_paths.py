"""Twin tests of the shortcuts that make a single small run cheap: each against its plain path.

* the quick min/max pass of the plausibility checks (``checks.QUICK_PASS``) against the
  detailed analysis: the same errors and warnings, word for word;
* a time index checked once (``schedules.check_index`` remembers it) against a fresh check;
* a discretisation reused from an earlier run of the same numbers
  (``engine.reuse.discretise_reused``) against a fresh one: the same arrays bit for bit, and
  whole simulations bit for bit with reuse turned off;
* result tables on a cached column index against tables of their own;
* effective inputs copied where every factor is exactly 1, against the multiplication.

The comparisons are between two paths of thermonet itself (no outside value is involved);
speed is measured by ``benchmarks/bench_engine.py``, never here.
"""

from __future__ import annotations

import dataclasses
import warnings

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import checks
from thermonet.engine import reuse
from thermonet.engine.compile import compile_network
from thermonet.engine.discretise import discretise
from thermonet.engine.run import input_factors
from thermonet.engine.simulate import effective_inputs
from thermonet.errors import ScheduleError
from thermonet.schedules import check_index

TZ = "Etc/GMT-1"
HOURS = 24 * 20
IDX = pd.date_range("2025-01-01 01:00", periods=HOURS, freq="h", tz=TZ)
_t = np.arange(HOURS)
WEATHER = pd.DataFrame({"temp_air": 4 + 6 * np.sin(2 * np.pi * (_t - 9) / 24)}, index=IDX)
GAINS = pd.Series(200 + 150 * np.sin(2 * np.pi * _t / 24), index=IDX)


def room(ua: float = 30.0, stiff: bool = False, switch: bool = False) -> tn.Network:
    """A room with a wall, a massless surface and a heating/cooling thermostat (invented)."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("ground", temperature=9.0)
    net.add_node("air", kind="air", capacitance=1.5e5)
    net.add_node("wall", kind="mass", capacitance=4e6)
    net.add_node("surf", kind="surface", capacitance=0.0)
    net.add_link("air", "surf", conductance=80.0, path="internal")
    net.add_link("surf", "wall", conductance=200.0, path="internal")
    net.add_link("wall", "out", conductance=ua, path="opaque")
    net.add_link("air", "ground", conductance=15.0, path="ground")
    net.add_airflow("out", "air", flow_m3h=40.0, path="infiltration")
    net.add_source("air", power=GAINS.copy(), path="internal")
    if stiff:        # a near-massless skin: its state is discretised by scaling and doubling
        net.add_node("skin", kind="surface", capacitance=1e-3)
        net.add_link("air", "skin", conductance=1e5, path="internal")
        net.add_link("skin", "wall", conductance=50.0, path="internal")
    if switch:
        src = net.add_source("air", power=300.0, path="solar")
        net.add_switch(on=tn.above("air", 23.0), off=tn.below("air", 21.0),
                       sources={src: (1.0, 0.5)})
    net.add_thermostat("air", heating_setpoint=20.0, cooling_setpoint=25.0,
                       max_heating_w=2500.0)
    return net


# ------------------------------------------------------------------------------- checks
def outcome(fn, *args, **kwargs):
    """(error type and message or None, [(warning class, message)]) of a call."""
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        try:
            fn(*args, **kwargs)
            err = None
        except Exception as e:  # noqa: BLE001 - the twin compares whatever is raised
            err = (type(e), str(e))
    return err, [(w.category, str(w.message)) for w in rec]


TEMPERATURES = [
    20.0, 5, np.float64(-12.5), np.array([18.0, 21.5, 19.0]), np.array([]),
    pd.Series([12.0, 14.0, 13.0], index=IDX[:3]),
    pd.Series([12.0, np.nan, 13.0], index=IDX[:3]),       # NaN: error
    np.array([1.0, np.inf]), np.array([-np.inf, 1.0]),    # inf: error
    -300.0,                                               # below absolute zero: error
    np.array([290.0, 295.0, 300.0]),                      # kelvin: error
    np.array([1000.0, 1200.0]),                           # impossible: error
    np.array([20.0, 70.0]), np.array([-95.0, 0.0]),       # implausible: warning
    np.array([-90.0, 60.0]),                              # at the plausible limits: fine
    pd.Series([140.0, 150.0], index=IDX[:2]),             # hot but not kelvin: warning
]


@pytest.mark.parametrize("value", TEMPERATURES, ids=range(len(TEMPERATURES)))
def test_quick_pass_of_a_temperature_check_equals_the_detailed_analysis(value, monkeypatch):
    quick = outcome(checks.check_temperature, value, "input x")
    monkeypatch.setattr(checks, "QUICK_PASS", False)
    assert outcome(checks.check_temperature, value, "input x") == quick


def test_quick_pass_of_the_setpoint_range_equals_the_detailed_analysis(monkeypatch):
    for value in (20.0, 49.9, 50.5, -0.5, np.array([10.0, 55.0])):
        quick = outcome(checks.check_temperature, value, "x", plausible=checks.SETPOINT_RANGE)
        monkeypatch.setattr(checks, "QUICK_PASS", False)
        assert outcome(checks.check_temperature, value, "x",
                       plausible=checks.SETPOINT_RANGE) == quick
        monkeypatch.setattr(checks, "QUICK_PASS", True)


def test_quick_pass_of_the_simulation_checks_equals_the_detailed_analysis(monkeypatch):
    fine = room()
    edited = room()
    # a Series held by an element, changed in place after it was added
    held = next(s.power for s in edited.sources.values() if isinstance(s.power, pd.Series))
    held.iloc[5] = np.nan
    hot = WEATHER.assign(temp_air=WEATHER["temp_air"] + 273.15)
    cases = [(fine, WEATHER), (edited, WEATHER), (fine, hot)]
    quick = [outcome(checks.check_simulation_inputs, n, w, 14.0) for n, w in cases]
    monkeypatch.setattr(checks, "QUICK_PASS", False)
    assert [outcome(checks.check_simulation_inputs, n, w, 14.0) for n, w in cases] == quick
    assert quick[0] == (None, [])
    assert quick[1][0] is not None and quick[2][0] is not None


# -------------------------------------------------------------------------- time index
def test_a_remembered_index_gives_the_step_of_a_fresh_check():
    idx = pd.date_range("2025-03-01", periods=48, freq="15min", tz=TZ)
    first = check_index(idx)
    assert check_index(idx) == first == check_index(pd.DatetimeIndex(list(idx)))
    assert first == pd.Timedelta("15min")


def test_an_index_built_where_a_checked_one_lived_is_checked_again():
    # indexes are created and dropped in turn so that ids get reused: a bad index must be
    # refused even when it takes the place of a good one that passed
    for _ in range(30):
        good = pd.date_range("2025-01-01", periods=24, freq="h", tz=TZ)
        check_index(good)
        del good                      # freed at once (no cycle): its id may be taken next
        bad = pd.DatetimeIndex(list(pd.date_range("2025-01-01", periods=23, freq="h", tz=TZ))
                               + [pd.Timestamp("2025-01-02 02:00", tz=TZ)])
        with pytest.raises(ScheduleError, match="irregular step"):
            check_index(bad)
        del bad


# --------------------------------------------------------------------- discretisation
def _arrays(disc):
    return {k: getattr(disc, k) for k in ("C", "K", "E", "Yx", "Yu", "lam", "Q", "W", "dense")}


@pytest.mark.parametrize("stiff", [False, True], ids=["modal", "doubling"])
def test_a_reused_discretisation_equals_a_fresh_one(stiff):
    comp = compile_network(room(stiff=stiff), WEATHER)
    st, C, G = comp.st, comp.val.C[None, :], comp.val.G[None, :, :]
    fresh = discretise(st, C, G, comp.step_s)
    kept = reuse.discretise_reused(st, C.copy(), G.copy(), comp.step_s)
    again = reuse.discretise_reused(st, C.copy(), G.copy(), comp.step_s)
    assert again is kept and bool(kept.dense.any()) is stiff
    for name, a in _arrays(fresh).items():
        b = _arrays(kept)[name]
        assert a.shape == b.shape and a.tobytes() == b.tobytes(), name
    for s in range(fresh.K.shape[1]):
        for a, b in zip(fresh.matrices(0, s), kept.matrices(0, s), strict=True):
            assert a.tobytes() == b.tobytes()
    with pytest.raises(ValueError, match="read-only"):
        kept.Q[0, 0, 0, 0] = 1.0
    assert kept.formed and not dataclasses.replace(kept, C=kept.C[:1]).formed
    G2 = G.copy()
    G2[0, :, 0] *= 1.0 + 1e-15          # one conductance changed in its last digits
    other = reuse.discretise_reused(st, C, G2, comp.step_s)
    assert other is not kept
    assert other.Q.tobytes() == discretise(st, C, G2, comp.step_s).Q.tobytes()


@pytest.mark.parametrize("kernel", ["numba", "numpy"])
@pytest.mark.parametrize("case", ["plain", "stiff", "switch"])
def test_simulations_reusing_a_discretisation_equal_fresh_ones(case, kernel, monkeypatch):
    net = room(stiff=case == "stiff", switch=case == "switch")
    kw = {"kernel": kernel, "warmup_days": 2}
    tables = ("temperatures", "mean_temperatures", "flows", "heating", "cooling")
    tn.simulate(net, WEATHER, **kw)                        # the next run reuses this one's
    reused = tn.simulate(net, WEATHER, **kw)
    monkeypatch.setattr(reuse, "REUSE_ENTRIES", 0)
    fresh = tn.simulate(net, WEATHER, **kw)
    for t in tables:
        a, b = getattr(reused, t).to_numpy(), getattr(fresh, t).to_numpy()
        assert a.tobytes() == b.tobytes(), t
    ba, bb = reused.balance(list(net.nodes), "D"), fresh.balance(list(net.nodes), "D")
    assert ba.to_numpy().tobytes() == bb.to_numpy().tobytes()


def test_a_changed_network_is_not_served_an_earlier_discretisation():
    a = tn.simulate(room(ua=30.0), WEATHER, warmup_days=1)
    b = tn.simulate(room(ua=31.0), WEATHER, warmup_days=1)
    c = tn.simulate(room(ua=30.0), WEATHER, warmup_days=1)
    assert not np.array_equal(a.temperatures.to_numpy(), b.temperatures.to_numpy())
    assert a.temperatures.to_numpy().tobytes() == c.temperatures.to_numpy().tobytes()


# ------------------------------------------------------------------------------ tables
def test_tables_on_a_cached_column_index_equal_tables_of_their_own():
    net = room()
    r1, r2 = tn.simulate(net, WEATHER, warmup_days=0), tn.simulate(net, WEATHER, warmup_days=0)
    t1, t2 = r1.temperatures, r2.temperatures
    own = pd.DataFrame(t1.to_numpy(), index=t1.index, columns=list(t1.columns))
    pd.testing.assert_frame_equal(t1, own)
    assert t1.columns.dtype == own.columns.dtype
    t1.columns.name = "node"                  # renaming one table's columns ...
    assert t2.columns.name is None           # ... leaves the other run's alone
    assert r1.flows.columns.name is None


# ------------------------------------------------------------------------------ inputs
@pytest.mark.parametrize("switch", [False, True], ids=["factors of 1", "switched factors"])
def test_effective_inputs_copied_where_every_factor_is_one_equal_the_product(switch):
    comp = compile_network(room(switch=switch), WEATHER)
    F = input_factors(comp.st, [comp.val])[0]
    rng = np.random.default_rng(3)
    n = len(comp.index)
    for S in (np.zeros(n, dtype=np.int64), rng.integers(0, comp.n_states, n)):
        P = rng.normal(0, 500, (n, comp.m))
        U_end, _ = effective_inputs(comp, F, S, P, 0)
        plain = comp.U * F[S]
        plain[:, comp.nb + comp.nsrc:] = P
        assert U_end.tobytes() == plain.tobytes()
    assert bool((F != 1.0).any()) is switch
