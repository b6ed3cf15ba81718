"""Design studies (thermonet.studies): variants on a variant axis, failures, resumable output,
executors (threads, a real dask LocalCluster), sensitivity (one at a time, Morris, Sobol')
and calibration to measurements.

Reference values come from outside the code under test: one-by-one ``thermonet.simulate``
runs and their ``Results`` tables (the batched study must reproduce them), closed-form
steady states, the analytic Sobol' indices of the Ishigami function, the exact elementary
effects of a linear function, and parameters used to generate synthetic measurements.
"""

from __future__ import annotations

import math
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import studies
from thermonet.engine.batch import run_batch
from thermonet.errors import NetworkError, StudyError, StudyWarning

TZ = "Etc/GMT-1"
HOURS = 24 * 20
IDX = pd.date_range("2025-03-01 01:00", periods=HOURS, freq="h", tz=TZ)
_t = np.arange(HOURS)
_rng = np.random.default_rng(42)
WEATHER = pd.DataFrame({
    "temp_air": 8.0 + 7.0 * np.sin(2 * np.pi * (_t - 9) / 24) + 4.0 * np.sin(2 * np.pi * _t / 200)
    + _rng.normal(0.0, 0.8, HOURS),
    "ghi": np.clip(650.0 * np.sin(2 * np.pi * (_t - 6) / 24), 0.0, None)
    * _rng.uniform(0.3, 1.0, HOURS),
}, index=IDX)
WARMUP = 3.0  # [days]


def rel_close(a, b, tol=1e-9):
    return abs(a - b) <= tol * max(1.0, abs(b))


# ------------------------------------------------------------------------ model builders
SETBACK = pd.Series(np.where((IDX.hour >= 22) | (IDX.hour < 6), 16.0, 20.0), index=IDX)


def room(ua=40.0, c_slab=5e6, aperture=2.0, ach=0.5, gains=150.0, heat_c=20.0, cool_c=26.0,
         night_vent=False, setback=False, thermostat=True):
    """Air (thermostat), slab, massless glazing surface; solar [W] = aperture [m²] · ghi.

    ``setback``: heating setpoint 16 °C from 22:00 to 06:00, else 20 °C (a schedule).
    """
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=2.5e5, volume=120.0)
    net.add_node("slab", kind="mass", capacitance=c_slab)
    net.add_node("glass", kind="surface", capacitance=0.0)
    net.add_link("room", "slab", conductance=180.0, path="internal")
    net.add_link("out", "room", conductance=ua, path="opaque")
    net.add_link("room", "glass", conductance=30.0, path="glazing")
    net.add_link("glass", "out", conductance=45.0, path="glazing")
    net.add_airflow("out", "room", ach=ach, path="infiltration")
    net.add_source("slab", power=WEATHER["ghi"] * aperture, path="solar")
    net.add_source("room", power=gains, path="internal")
    if thermostat:
        net.add_thermostat("room", heating_setpoint=SETBACK if setback else heat_c,
                           cooling_setpoint=None if cool_c is None else cool_c)
    if night_vent:
        vent = net.add_airflow("out", "room", flow_m3h=300.0, path="ventilation")
        net.add_switch(on=tn.above("room", 23.0), links={vent: (0.0, 1.0)})
    return net


INTERRUPT_AT: list = []   # build_interruptible raises KeyboardInterrupt for these ua values
BUILD_CALLS: list = []


def build_interruptible(ua=40.0, c_slab=5e6):
    BUILD_CALLS.append(ua)
    if ua in INTERRUPT_AT:
        raise KeyboardInterrupt
    return room(ua=ua, c_slab=c_slab)


def one_by_one(params: pd.DataFrame, comfort="room", balance=("room", "slab"),
               hours=(25.0, 26.0), dh=(24.0,)):
    """The study's columns from thermonet.simulate and the Results tables, row by row."""
    out = {}
    for label, kw in zip(params.index, params.to_dict("records"), strict=True):
        res = tn.simulate(room(**kw), WEATHER, warmup_days=WARMUP)
        s = res.summary()
        t = res.temperatures[comfort]
        d = dict(s)
        for thr in hours:
            d[f"hours_above_{thr:g}"] = float((t > thr).sum())
        for thr in dh:
            d[f"degree_hours_above_{thr:g}"] = float((t - thr).clip(lower=0.0).sum())
        d["max_temperature_c"] = float(t.max())
        d["min_temperature_c"] = float(t.min())
        d["mean_temperature_c"] = float(t.mean())
        for k, v in res.balance(list(balance)).sum().items():
            d[f"balance:{k}"] = float(v)
        out[label] = d
    return out


def variant_table(n=24, seed=0):
    rng = np.random.default_rng(seed)
    return pd.DataFrame({
        "ua": rng.uniform(15.0, 90.0, n), "c_slab": rng.uniform(1e6, 1.5e7, n),
        "aperture": rng.uniform(0.5, 5.0, n), "ach": rng.uniform(0.1, 1.2, n),
        "gains": rng.uniform(0.0, 600.0, n), "heat_c": rng.uniform(18.0, 21.0, n),
        "cool_c": rng.uniform(24.0, 27.0, n),
    }, index=pd.Index([f"v{i:02d}" for i in range(n)], name="variant"))


OPTS = dict(warmup_days=WARMUP, hours_above=(25.0, 26.0), degree_hours_above=(24.0,),
            balance_nodes=["room", "slab"])


# ================================================================ batched == one by one
@pytest.mark.parametrize("comfort", ["room", "slab", "glass"])
def test_batched_results_equal_one_by_one_for_every_variant(comfort):
    """Every column of every variant equals the one-by-one run to 1e-9 (relative, floor 1).

    Comfort at the thermostat's node, at a capacitive node and at a massless node exercise
    the ways the compiled loop gets the comfort temperature. Variants with a night-
    ventilation switch form a group of their own; the others include heating-setpoint
    schedules, no cooling setpoint, no thermostat at all, and solar gains that differ per
    variant.
    """
    params = variant_table(20)
    params["night_vent"] = False
    params.loc[["v03", "v11"], "night_vent"] = True
    params["setback"] = False
    params.loc[["v01", "v02", "v12"], "setback"] = True
    params["thermostat"] = True
    params.loc[["v05", "v06"], "thermostat"] = False
    params["cool_c"] = params["cool_c"].astype(object)
    params.loc["v07", "cool_c"] = None
    table = studies.run_variants(room, params, WEATHER, comfort_node=comfort, **OPTS)
    assert table["error"].isna().all()
    ref = one_by_one(params, comfort=comfort)
    checked = 0
    for label, d in ref.items():
        for key, v in d.items():
            assert rel_close(table.at[label, key], v), (label, key, table.at[label, key], v)
            checked += 1
    assert checked == sum(len(d) for d in ref.values()) >= 20 * 19
    # the parameter columns are carried through unchanged, in order
    pd.testing.assert_frame_equal(table[params.columns], params)


@pytest.mark.parametrize("comfort", ["room", "glass"])
def test_batch_kernel_sums_equal_the_numpy_reference_traces(comfort):
    """Twin test of the batch path: the compiled kernel's in-loop sums (modal coordinates)
    against the numpy reference loop (node coordinates, dense steps) whose hourly traces are
    summed afterwards — switches, setpoint schedules, several groups, massless nodes."""
    params = variant_table(6)
    params["night_vent"] = [False, True, False, True, False, False]
    params["setback"] = [False, False, True, True, False, False]
    nets = [room(**kw) for kw in params.to_dict("records")]
    opts = dict(comfort_node=comfort, warmup_days=WARMUP, hours_above=(22.0, 25.0),
                degree_hours_above=(24.0,), balance_nodes=["room", "slab"], link_energy=True)
    fast = run_batch(nets, WEATHER, **opts).table
    ref = run_batch(nets, WEATHER, kernel="numpy", **opts).table
    assert list(fast.columns) == list(ref.columns)
    for c in fast.columns:
        for i in fast.index:
            assert rel_close(fast.at[i, c], ref.at[i, c]), (i, c, fast.at[i, c], ref.at[i, c])


def _stiff(power=50.0):
    """tests/test_hardening.py's STIFF network (λ_max/λ_min ≈ 1e13): its modal form fails the
    isothermal-defect check and the engine steps it with doubling matrices."""
    net = tn.Network()
    net.add_boundary("b0", temperature="temp_air")
    for name, c in (("n0", 1e6), ("n1", 1e-3), ("n2", 1e4)):
        net.add_node(name, capacitance=c)
    net.add_link("b0", "n0", conductance=0.01, path="p")
    net.add_link("n0", "n1", conductance=1e5, path="p")
    net.add_link("n1", "n2", conductance=100.0, path="p")
    net.add_source("n2", power=power, path="internal")
    return net


def test_a_stiff_group_is_stepped_densely_and_still_exact():
    params = pd.DataFrame({"power": [20.0, 50.0, 80.0]})
    t = studies.run_variants(_stiff, params, WEATHER, comfort_node="n2",
                             balance_nodes=["n0", "n1", "n2"], warmup_days=WARMUP)
    for i, p in enumerate(params["power"]):
        res = tn.simulate(_stiff(p), WEATHER, warmup_days=WARMUP)
        assert rel_close(t.at[i, "mean_temperature_c"], res.temperatures["n2"].mean())
        for k, v in res.balance(["n0", "n1", "n2"]).sum().items():
            assert rel_close(t.at[i, f"balance:{k}"], v), k


def test_balance_of_several_volumes_and_link_energies():
    params = variant_table(5)
    table = studies.run_variants(room, params, WEATHER, warmup_days=WARMUP,
                                 balance_nodes={"air": ["room"], "all": ["room", "slab",
                                                                          "glass"]},
                                 link_energy=True)
    for label, kw in zip(params.index, params.to_dict("records"), strict=True):
        res = tn.simulate(room(**kw), WEATHER, warmup_days=WARMUP)
        for tag, nodes in (("air", ["room"]), ("all", ["room", "slab", "glass"])):
            for k, v in res.balance(nodes).sum().items():
                assert rel_close(table.at[label, f"balance[{tag}]:{k}"], v), (tag, k)
        kwh = res.flows.sum() * 3600.0 / 3.6e6   # W·h → kWh
        for name, v in kwh.items():
            assert rel_close(table.at[label, f"link:{name}"], v), name


def test_outputs_select_columns_by_name_and_pattern():
    params = variant_table(3)
    t = studies.run_variants(room, params, WEATHER, outputs=["heating_kwh", "balance:*"],
                             **OPTS)
    res_cols = [c for c in t.columns if c not in params.columns and c != "error"]
    assert res_cols[0] == "heating_kwh"
    assert all(c.startswith("balance:") for c in res_cols[1:]) and len(res_cols) > 4
    with pytest.raises(StudyError, match="'heating_mwh' names no result column"):
        studies.run_variants(room, params, WEATHER, outputs=["heating_mwh"], **OPTS)


def test_variant_traces_are_the_hourly_results_of_those_rows():
    params = variant_table(2)
    traces = studies.variant_traces(room, params, WEATHER, warmup_days=WARMUP)
    assert list(traces) == list(params.index)
    for label, kw in zip(params.index, params.to_dict("records"), strict=True):
        ref = tn.simulate(room(**kw), WEATHER, warmup_days=WARMUP)
        diff = (traces[label].temperatures - ref.temperatures).abs().to_numpy().max()
        assert diff < 1e-9


# ============================================================================ failures
def test_a_failing_variant_names_its_row_and_the_others_finish():
    params = variant_table(8)
    params.loc["v02", "ua"] = -5.0                  # refused by Network.add_link (build)
    params.loc["v05", "c_slab"] = float("nan")      # refused by Network.add_node
    with pytest.warns(StudyWarning, match=r"2 of 8 variants failed \(row 'v02': build: "
                                          r"NetworkError: link 'out-room:opaque'"):
        table = studies.run_variants(room, params, WEATHER, **OPTS)
    assert table.at["v02", "error"].startswith("build: NetworkError:")
    assert "'slab' capacitance" in table.at["v05", "error"]
    assert table.loc[["v02", "v05"], "heating_kwh"].isna().all()
    good = params.drop(index=["v02", "v05"])
    ref = studies.run_variants(room, good, WEATHER, **OPTS)
    pd.testing.assert_frame_equal(table.loc[good.index], ref)


def _build_isolated(ua=40.0):
    net = room(ua=ua)
    if ua > 50:
        net.add_node("loft", kind="air", capacitance=1e5)   # no path to any boundary
    return net


def test_simulation_failures_and_errors_raise():
    params = pd.DataFrame({"ua": [30.0, 60.0, 40.0]}, index=["a", "b", "c"])
    with pytest.warns(StudyWarning, match="row 'b': simulate: NetworkError"):
        t = studies.run_variants(_build_isolated, params, WEATHER, warmup_days=WARMUP)
    assert "'loft'" in t.at["b", "error"] and t["error"].isna().sum() == 2
    with pytest.raises(StudyError, match=r"variant row 'b' failed: simulate: NetworkError"):
        studies.run_variants(_build_isolated, params, WEATHER, warmup_days=WARMUP,
                             errors="raise")


def test_bad_study_inputs_are_refused_with_a_reason():
    with pytest.raises(TypeError, match="params must be a pandas DataFrame"):
        studies.run_variants(room, {"ua": [1.0]}, WEATHER)
    dup = pd.DataFrame({"ua": [30.0, 40.0]}, index=[1, 1])
    with pytest.raises(StudyError, match="must be unique"):
        studies.run_variants(room, dup, WEATHER)
    with pytest.raises(StudyError, match="reserved"):
        studies.run_variants(room, pd.DataFrame({"error": [1.0]}), WEATHER)
    with pytest.raises(ValueError, match="chunk_size must be a positive integer"):
        studies.run_variants(room, variant_table(2), WEATHER, chunk_size=0)
    with pytest.raises(TypeError, match="executor must be None"):
        studies.run_variants(room, variant_table(2), WEATHER, executor="cluster")
    with pytest.raises(StudyError, match="bounds\\['ua'\\]: need finite low < high"):
        studies.morris(room, {"ua": (50.0, 10.0)}, WEATHER)
    with pytest.raises(StudyError, match="n must be a power of 2"):
        studies.sobol(room, {"ua": (10.0, 50.0)}, WEATHER, n=1000)


# ==================================================================== resumable output
def test_a_variant_has_the_same_bits_alone_in_any_chunk_and_resumed(tmp_path):
    """Reproducible studies: a variant's numbers do not depend on the chunk or batch it ran
    in — alone, in chunks of any size, or resumed after an interruption — bit for bit."""
    params = variant_table(9)
    params["night_vent"] = [False, True, False] * 3
    whole = studies.run_variants(room, params, WEATHER, progress=False, **OPTS)
    for size in (2, 4):
        t = studies.run_variants(room, params, WEATHER, progress=False, chunk_size=size,
                                 **OPTS)
        pd.testing.assert_frame_equal(t, whole, check_exact=True)
    for i in (0, 4):
        alone = studies.run_variants(room, params.iloc[[i]], WEATHER, progress=False, **OPTS)
        pd.testing.assert_frame_equal(alone, whole.iloc[[i]][alone.columns], check_exact=True)
        extra = [c for c in whole.columns if c not in alone.columns]   # paths it lacks
        assert (whole.iloc[i][extra] == 0.0).all()
    out = tmp_path / "study"
    studies.run_variants(room, params.iloc[:5], WEATHER, progress=False, chunk_size=2,
                         out=out, **OPTS)                       # an earlier, partial run
    resumed = studies.run_variants(room, params, WEATHER, progress=False, chunk_size=2,
                                   out=out, **OPTS)
    pd.testing.assert_frame_equal(resumed, whole, check_exact=True)


def test_interrupted_study_keeps_finished_chunks_and_resumes(tmp_path):
    params = variant_table(12)[["ua", "c_slab"]]
    full = studies.run_variants(build_interruptible, params, WEATHER, warmup_days=WARMUP)
    out = tmp_path / "study"
    INTERRUPT_AT[:] = [params.at["v09", "ua"]]
    try:
        with pytest.raises(KeyboardInterrupt):
            studies.run_variants(build_interruptible, params, WEATHER, warmup_days=WARMUP,
                                 chunk_size=4, out=out, progress=False)
    finally:
        INTERRUPT_AT.clear()
    stored = studies.read_study(out)
    assert sorted(stored.index) == list(params.index[:8])      # two chunks were finished
    BUILD_CALLS.clear()
    resumed = studies.run_variants(build_interruptible, params, WEATHER, warmup_days=WARMUP,
                                   chunk_size=4, out=out, progress=False)
    assert sorted(BUILD_CALLS) == sorted(params["ua"].iloc[8:])  # only the unfinished rows
    pd.testing.assert_frame_equal(resumed, full)
    # a finished study is read back without building anything
    BUILD_CALLS.clear()
    again = studies.run_variants(build_interruptible, params, WEATHER, warmup_days=WARMUP,
                                 chunk_size=4, out=out)
    assert BUILD_CALLS == []
    pd.testing.assert_frame_equal(again, full)
    # a changed row is run again; the others are kept
    changed = params.copy()
    changed.loc["v01", "ua"] = 33.0
    t = studies.run_variants(build_interruptible, changed, WEATHER, warmup_days=WARMUP,
                             chunk_size=4, out=out)
    assert BUILD_CALLS == [33.0]
    assert not rel_close(t.at["v01", "heating_kwh"], full.at["v01", "heating_kwh"], 1e-6)
    # the folder refuses another study
    with pytest.raises(StudyError, match="different study .*weather"):
        studies.run_variants(build_interruptible, params, WEATHER * 1.01, out=out,
                             warmup_days=WARMUP)
    with pytest.raises(StudyError, match="not a study folder"):
        studies.read_study(tmp_path)


def test_failed_rows_are_stored_and_run_again_on_resume(tmp_path):
    params = pd.DataFrame({"ua": [30.0, 60.0, 40.0]}, index=["a", "b", "c"])
    with pytest.warns(StudyWarning):
        studies.run_variants(_build_isolated, params, WEATHER, warmup_days=WARMUP,
                             out=tmp_path)
    stored = studies.read_study(tmp_path)
    assert stored.loc["b", "error"].startswith("simulate: NetworkError")
    fixed = params.copy()
    fixed.loc["b", "ua"] = 45.0          # a new parameter value: a new row
    t = studies.run_variants(_build_isolated, fixed, WEATHER, warmup_days=WARMUP,
                             out=tmp_path)
    assert t["error"].isna().all()


# =========================================================================== executors
def test_thread_pool_executor_gives_the_same_table():
    params = variant_table(10)
    ref = studies.run_variants(room, params, WEATHER, **OPTS)
    with ThreadPoolExecutor(2) as ex:
        t = studies.run_variants(room, params, WEATHER, executor=ex, chunk_size=3, **OPTS)
    pd.testing.assert_frame_equal(t, ref)


def test_process_pool_executor_gives_the_same_table():
    """Local worker processes (started by spawn, as the module docstring asks)."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    params = variant_table(8)
    ref = studies.run_variants(room, params, WEATHER, **OPTS)
    with ProcessPoolExecutor(2, mp_context=multiprocessing.get_context("spawn")) as ex:
        t = studies.run_variants(room, params, WEATHER, executor=ex, chunk_size=2, **OPTS)
    pd.testing.assert_frame_equal(t, ref)


def test_a_forking_pool_is_refused_once_openmp_threads_run():
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    import numba

    studies.run_variants(room, variant_table(2), WEATHER, **OPTS)   # starts the loop's threads
    if numba.threading_layer() != "omp":
        pytest.skip("numba runs on another threading layer here; forking is then allowed")
    with ProcessPoolExecutor(2, mp_context=multiprocessing.get_context("fork")) as ex, \
            pytest.raises(StudyError, match="get_context\\('spawn'\\)"):
        studies.run_variants(room, variant_table(2), WEATHER, executor=ex, **OPTS)


def test_dask_local_cluster_gives_the_same_table():
    """A real dask.distributed LocalCluster: two worker processes on this machine."""
    distributed = pytest.importorskip("distributed")
    import cloudpickle

    params = variant_table(12)
    params.loc["v04", "ua"] = -1.0        # a failing row travels back from the workers
    with pytest.warns(StudyWarning, match="row 'v04'"):
        ref = studies.run_variants(room, params, WEATHER, **OPTS)
    # the workers cannot import this test module: ship its functions by value
    import sys

    cloudpickle.register_pickle_by_value(sys.modules[__name__])
    try:
        with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                      dashboard_address=None) as cluster, \
                distributed.Client(cluster) as client:
            with pytest.warns(StudyWarning, match="row 'v04'"):
                t = studies.run_variants(room, params, WEATHER, executor=client, chunk_size=4,
                                         **OPTS)
    finally:
        cloudpickle.unregister_pickle_by_value(sys.modules[__name__])
    pd.testing.assert_frame_equal(t, ref)


# ========================================================================= sensitivity
def _steady_room(ua=50.0, g_inf=20.0, gains=300.0):
    """Constant 0 °C outdoors, heating to 20 °C: heating = (ua + g_inf)·20 − gains [W]."""
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    net.add_node("room", kind="air", capacitance=2e5)
    net.add_node("slab", kind="mass", capacitance=4e6)
    net.add_link("room", "slab", conductance=100.0, path="internal")
    net.add_link("out", "room", conductance=ua, path="opaque")
    net.add_link("out", "room", conductance=g_inf, path="infiltration")
    net.add_source("room", power=gains, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0)
    return net


def test_one_at_a_time_matches_the_steady_state_heat_loss():
    """At steady state heating = (UA + G_inf)·ΔT − gains, so each swing is known exactly."""
    base = {"ua": 50.0, "g_inf": 20.0, "gains": 300.0}
    ranges = {"ua": (30.0, 80.0), "g_inf": (10.0, 25.0), "gains": (100.0, 500.0)}
    tab = studies.one_at_a_time(_steady_room, base, ranges, WEATHER,
                                outputs=["heating_kwh", "balance:*"], balance_nodes=["room"],
                                warmup_days=WARMUP)
    hours = HOURS  # reported hours; 1 kWh = 1000 W·h
    heat = tab[tab["output"] == "heating_kwh"].set_index("parameter")
    assert list(heat.index) == ["ua", "gains", "g_inf"]   # swings 1000, 400, 300 W: largest first
    dT = 20.0
    for p, (lo, hi) in ranges.items():
        k = -1.0 if p == "gains" else dT           # W per unit of the parameter
        assert math.isclose(heat.at[p, "delta_high"], k * (hi - base[p]) * hours / 1000,
                            rel_tol=1e-6)
        assert math.isclose(heat.at[p, "delta_low"], k * (lo - base[p]) * hours / 1000,
                            rel_tol=1e-6)
    assert math.isclose(heat.at["ua", "result_base"], (70.0 * dT - 300.0) * hours / 1000,
                        rel_tol=1e-6)
    # effect on each balance path: moving ua changes only the opaque path and heating
    inf = tab[(tab["output"] == "balance:infiltration") & (tab["parameter"] == "ua")]
    assert abs(float(inf["swing"].iloc[0])) < 1e-6
    opq = tab[(tab["output"] == "balance:opaque") & (tab["parameter"] == "ua")]
    assert math.isclose(float(opq["delta_high"].iloc[0]), -dT * 30.0 * hours / 1000,
                        rel_tol=1e-6)
    fig, ax = studies.tornado_plot(tab, "heating_kwh", unit="kWh")
    assert len(ax.patches) == 6 and "heating_kwh" in ax.get_xlabel()
    import matplotlib.pyplot as plt

    plt.close(fig)


def _ishigami(x1, x2, x3, a=7.0, b=0.1):
    return {"y": math.sin(x1) + a * math.sin(x2) ** 2 + b * x3**4 * math.sin(x1)}


def test_sobol_indices_of_the_ishigami_function():
    """Ishigami, T., Homma, T. (1990), "An importance quantification technique in uncertainty
    analysis for computer models", Proc. ISUMA'90, 398–403: f = sin x₁ + a sin² x₂ +
    b x₃⁴ sin x₁, x_i ~ U(−π, π). Its variance decomposition, integrated by hand:
    V₁ = ½(1 + bπ⁴/5)², V₂ = a²/8, V₃ = 0, V₁₃ = b²π⁸(1/18 − 1/50), V₁₂ = V₂₃ = V₁₂₃ = 0,
    V = a²/8 + bπ⁴/5 + b²π⁸/18 + ½. So S_i = V_i/V, S_T1 = (V₁ + V₁₃)/V, S_T2 = V₂/V,
    S_T3 = V₁₃/V, S₁₃ = V₁₃/V (≈ 0.3139, 0.4424, 0; 0.5576, 0.4424, 0.2437; 0.2437 for
    a = 7, b = 0.1).
    """
    a, b = 7.0, 0.1
    V1 = 0.5 * (1 + b * math.pi**4 / 5) ** 2
    V2 = a**2 / 8
    V13 = b**2 * math.pi**8 * (1 / 18 - 1 / 50)
    V = a**2 / 8 + b * math.pi**4 / 5 + b**2 * math.pi**8 / 18 + 0.5
    assert math.isclose(V1 + V2 + V13, V, rel_tol=1e-12)   # the decomposition is complete
    exact_S1 = {"x1": V1 / V, "x2": V2 / V, "x3": 0.0}
    exact_ST = {"x1": (V1 + V13) / V, "x2": V2 / V, "x3": V13 / V}
    bounds = {k: (-math.pi, math.pi) for k in ("x1", "x2", "x3")}
    res = studies.sobol(_ishigami, bounds, outputs="y", n=2**13, seed=7, second_order=True)
    ind = res.indices.set_index("parameter")
    assert len(res.variants) == 2**13 * 8          # N·(2k + 2) with second-order indices
    # Monte-Carlo error of N = 8192 Saltelli samples is ~0.01; 0.03 is about 3 of them
    for k in bounds:
        assert abs(ind.at[k, "S1"] - exact_S1[k]) < 0.03, (k, ind.at[k, "S1"], exact_S1[k])
        assert abs(ind.at[k, "ST"] - exact_ST[k]) < 0.03, (k, ind.at[k, "ST"], exact_ST[k])
        assert ind.at[k, "S1_conf"] < 0.05 and ind.at[k, "ST_conf"] < 0.05
    assert list(ind.index) == ["x1", "x2", "x3"]                  # sorted by ST
    # second order: only x1·x3 interact, S13 = V13/V; the S2 estimator is noisier (~0.03)
    s2 = res.second_order.set_index(["parameter_1", "parameter_2"])["S2"]
    assert abs(s2[("x1", "x3")] - V13 / V) < 0.06
    assert abs(s2[("x1", "x2")]) < 0.06 and abs(s2[("x2", "x3")]) < 0.06


def test_sobol_on_a_network_where_one_parameter_dominates():
    """Heating of the steady room is linear in ua over 20–200 W/K (a 3600 W·ΔT span) while
    gains move it by 2 W and g_inf by 0.4 W·ΔT: ua carries > 99.9 % of the variance."""
    bounds = {"ua": (20.0, 200.0), "g_inf": (19.9, 20.1), "gains": (299.0, 301.0)}
    res = studies.sobol(_steady_room, bounds, WEATHER, outputs="heating_kwh", n=64, seed=1,
                        warmup_days=WARMUP)
    ind = res.indices.set_index("parameter")
    assert ind.index[0] == "ua"
    assert ind.at["ua", "S1"] > 0.97 and ind.at["ua", "ST"] > 0.97
    assert ind.loc[["g_inf", "gains"], "ST"].abs().max() < 0.01


def test_morris_elementary_effects_of_a_linear_function_and_a_network():
    """For y = 3 x₁ + x₂ every elementary effect (Morris 1991, in units of the normalised
    range) is the coefficient times the range: μ* = 3·2 = 6 and 1, σ = 0."""
    def lin(x1, x2):
        return {"y": 3.0 * x1 + x2}

    r = studies.morris(lin, {"x1": (0.0, 2.0), "x2": (0.0, 1.0)}, outputs="y",
                       trajectories=10, seed=3)
    ind = r.indices.set_index("parameter")
    assert np.allclose(ind["mu_star"], [6.0, 1.0]) and np.allclose(ind["sigma"], 0.0)
    bounds = {"ua": (20.0, 200.0), "g_inf": (19.0, 21.0), "gains": (200.0, 400.0)}
    rn = studies.morris(_steady_room, bounds, WEATHER, outputs="heating_kwh", trajectories=6,
                        seed=2, warmup_days=WARMUP)
    ind = rn.indices.set_index("parameter")
    # steady state: μ*_ua = 20 K · 180 W/K · hours/1000, exactly (linear)
    assert math.isclose(ind.at["ua", "mu_star"], 20.0 * 180.0 * HOURS / 1000, rel_tol=1e-6)
    assert math.isclose(ind.at["gains", "mu_star"], 200.0 * HOURS / 1000, rel_tol=1e-6)


def test_sensitivity_refuses_failed_samples():
    def half_broken(ua=50.0):
        if ua > 150:
            raise ValueError("ua too large for this test")
        return _steady_room(ua=ua)

    with pytest.warns(StudyWarning), pytest.raises(StudyError, match="failed .*row"):
        studies.morris(half_broken, {"ua": (20.0, 200.0)}, WEATHER, trajectories=4, seed=0,
                       warmup_days=WARMUP)


# ========================================================================= calibration
def _calib_room(ua=60.0, c_mass=8e6, aperture=3.0, ach=0.6, heating=False):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=3e5, volume=150.0)
    net.add_node("mass", kind="mass", capacitance=c_mass)
    net.add_link("room", "mass", conductance=250.0, path="internal")
    net.add_link("out", "room", conductance=ua, path="opaque")
    net.add_airflow("out", "room", ach=ach, path="infiltration")
    net.add_source("mass", power=WEATHER["ghi"] * aperture, path="solar")
    net.add_source("room", power=200.0, path="internal")
    if heating:
        net.add_thermostat("room", heating_setpoint=21.0)
    return net


def test_calibration_recovers_parameters_from_noisy_temperatures():
    """Synthetic measurements: the engine with known parameters plus 0.05 K noise, 10 % of
    the hours missing. The fit recovers the parameters within a few standard errors."""
    true = {"ua": 60.0, "c_mass": 8e6, "aperture": 3.0}
    sim = tn.simulate(_calib_room(**true), WEATHER, warmup_days=WARMUP)
    rng = np.random.default_rng(5)
    meas = sim.temperatures[["room"]] + rng.normal(0.0, 0.05, (HOURS, 1))
    missing = rng.random(HOURS) < 0.1
    meas.loc[missing, "room"] = np.nan
    fit = studies.calibrate(_calib_room, {"ua": (40.0, 1.0, 500.0),
                                          "c_mass": (4e6, 1e5, 1e8),
                                          "aperture": (1.5, 0.0, 20.0)},
                            WEATHER, meas, sigma={"room": 0.05}, warmup_days=WARMUP)
    p = fit.parameters
    assert fit.success and fit.n_obs == int((~missing).sum()) and fit.dof == fit.n_obs - 3
    for k, v in true.items():
        se = p.at[k, "std_error"]
        assert 0 < se < 0.05 * v, (k, se)
        assert abs(p.at[k, "value"] - v) < 4 * se, (k, p.at[k, "value"], v, se)
    # residuals: NaN exactly where nothing was measured; their spread is the noise
    assert fit.residuals["room"].isna().to_numpy().tolist() == missing.tolist()
    assert 0.85 < fit.residual_std < 1.15
    assert 0.04 < fit.rmse["room"] < 0.06
    assert np.allclose(np.diag(fit.correlation), 1.0)
    assert (fit.correlation.abs().to_numpy() <= 1 + 1e-9).all()


def test_calibration_to_heating_power_recovers_infiltration_and_aperture():
    true = {"ach": 0.6, "aperture": 3.0}

    def build(ach, aperture):
        return _calib_room(ach=ach, aperture=aperture, heating=True)

    sim = tn.simulate(build(**true), WEATHER, warmup_days=WARMUP)
    rng = np.random.default_rng(6)
    meas = pd.DataFrame({"heating": sim.heating + rng.normal(0.0, 20.0, HOURS)})
    meas.iloc[100:160] = np.nan                   # a logger outage
    fit = studies.calibrate(build, {"ach": (0.3, 0.0, 5.0), "aperture": (1.0, 0.0, 20.0)},
                            WEATHER, meas, sigma={"heating": 20.0}, warmup_days=WARMUP)
    for k, v in true.items():
        se = fit.parameters.at[k, "std_error"]
        assert abs(fit.parameters.at[k, "value"] - v) < 4 * se and se < 0.1 * v, k
    assert fit.n_obs == HOURS - 60


def test_calibration_refuses_unknown_columns_and_off_index_measurements():
    meas = pd.DataFrame({"attic": np.ones(5)}, index=IDX[:5])
    with pytest.raises(StudyError, match="'attic'"):
        studies.calibrate(_calib_room, {"ua": 50.0}, WEATHER, meas, warmup_days=WARMUP)
    off = pd.DataFrame({"room": np.ones(3)}, index=IDX[:3] + pd.Timedelta("30min"))
    with pytest.raises(StudyError, match="not on the simulation index"):
        studies.calibrate(_calib_room, {"ua": 50.0}, WEATHER, off, warmup_days=WARMUP)
    with pytest.raises(StudyError, match=r"parameters\['ua'\]"):
        studies.calibrate(_calib_room, {"ua": (50.0, 60.0, 70.0)}, WEATHER,
                          pd.DataFrame({"room": np.ones(3)}, index=IDX[:3]))


def test_network_errors_in_calibration_name_the_parameters():
    meas = pd.DataFrame({"room": np.full(5, 20.0)}, index=IDX[:5])
    with pytest.raises(StudyError, match=r"sigma for column 'room' must be > 0, got 0.0"):
        studies.calibrate(_calib_room, {"ua": 50.0}, WEATHER, meas, warmup_days=WARMUP)
    with pytest.raises(StudyError, match=r"build failed at \{'ua': -1.0\}") as e:
        studies.calibrate(_calib_room, {"ua": -1.0}, WEATHER, meas, sigma={"room": 0.1},
                          warmup_days=WARMUP)
    assert isinstance(e.value.__cause__, NetworkError)


def test_batch_checks_the_weather_like_simulate():
    """Plausibility on every path: weather in kelvin is refused by the batch path too,
    naming the column (as thermonet.simulate does)."""
    hot = WEATHER.assign(temp_air=WEATHER["temp_air"] + 273.15)
    with pytest.raises(tn.errors.WeatherError, match="temp_air.*kelvin"):
        run_batch([room()], hot, warmup_days=WARMUP)
