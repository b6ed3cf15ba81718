"""Parametric networks (thermonet.parameters): expressions, networks and builders that take
them where a number goes, and studies that run a table of values without a network per row.

Reference values come from outside the code under test: plain Python/numpy arithmetic on the
same numbers (the expressions must reproduce it), networks built one by one with plain
numbers by the same builders (the parametric run must reproduce their results to 1e-9), and
the ISO 6946 U-value of a wall worked by hand.
"""

from __future__ import annotations

import math
import pickle
import warnings

import numpy as np
import pandas as pd
import pytest
from test_builders import sunny_weather

import thermonet as tn
from thermonet import studies
from thermonet.builders import Element, Window, add_room, add_window, rooms
from thermonet.builders.airflow import add_infiltration, infiltration_rate
from thermonet.constructions import Construction, Layer
from thermonet.errors import ModelFileError, NetworkError, ParameterError, StudyError
from thermonet.io import dumps
from thermonet.parameters import Param, ScaledSeries, default, evaluate, parameters_of
from thermonet.solar import MovableShading

WEATHER = sunny_weather(days=5)
WARMUP = 1.0  # [days]


def rel_err(a, b) -> float:
    a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    return float(np.max(np.abs(a - b) / np.maximum(1.0, np.abs(b))))


# ============================================================================ expressions
def test_expression_arithmetic_equals_plain_arithmetic_row_by_row():
    a, b, d = Param("a", 2.0, "m²"), Param("b", 0.5), Param("d", 0.16, "m")
    rows = {"a": np.array([1.0, 2.5, 7.0]), "b": np.array([0.2, 0.5, 0.9]),
            "d": np.array([0.05, 0.16, 0.3])}
    cases = [
        (a + b, lambda a, b, d: a + b), (a - 3.0, lambda a, b, d: a - 3.0),
        (4.0 - a, lambda a, b, d: 4.0 - a), (a * b * 0.7, lambda a, b, d: a * b * 0.7),
        (a / b, lambda a, b, d: a / b), (1.0 / a, lambda a, b, d: 1.0 / a),
        (a ** 2, lambda a, b, d: a ** 2), (2.0 ** b, lambda a, b, d: 2.0 ** b),
        (-(a - b), lambda a, b, d: -(a - b)),
        # a U-value from an insulation thickness, ISO 6946 form 1/(R_rest + d/λ)
        (1.0 / (0.5 + d / 0.035), lambda a, b, d: 1.0 / (0.5 + d / 0.035)),
        ((a * b).apply(np.sqrt), lambda a, b, d: math.sqrt(a * b)),
    ]
    for expr, plain in cases:
        got = evaluate(expr, rows)
        want = [plain(*(rows[k][i] for k in "abd")) for i in range(3)]
        np.testing.assert_allclose(got, want, rtol=1e-15, atol=0)
        assert math.isclose(default(expr), plain(2.0, 0.5, 0.16), rel_tol=1e-15)


def test_readable_form_and_parameters_of_an_expression():
    a, g = Param("area", 3.0, "m²"), Param("g", 0.5)
    assert repr(a * g * 0.7) == "area * g * 0.7"
    assert repr((a + 1.0) / (g - 0.1)) == "(area + 1.0) / (g - 0.1)"
    assert repr(a - (g - 1.0)) == "area - (g - 1.0)"
    assert repr((a * g).apply(np.sqrt, "sqrt")) == "sqrt(area * g)"
    assert list(parameters_of(a * g + a)) == ["area", "g"]
    with pytest.raises(ParameterError, match="two different parameters are named 'area'"):
        parameters_of(a + Param("area", 4.0, "m²"))


def test_an_expression_refuses_to_become_a_plain_number_or_a_decision():
    a = Param("area", 3.0, "m²")
    for attempt in (lambda: float(a * 2), lambda: a > 1.0, lambda: bool(a), lambda: int(a)):
        with pytest.raises(TypeError, match="parameter.*'area'.*default"):
            attempt()


def test_a_series_times_an_expression_is_one_scaled_series():
    s = WEATHER["ghi"]
    a, g = Param("area", 3.0, "m²"), Param("g", 0.5)
    prod = s * a * g
    assert isinstance(prod, ScaledSeries) and prod.series is s
    pd.testing.assert_series_equal(default(prod), s * 1.5)
    assert isinstance(a * s, ScaledSeries)
    with pytest.raises(ParameterError, match="one source per term"):
        prod + s * g


def test_bad_parameter_declarations_are_refused():
    with pytest.raises(ParameterError, match="identifier"):
        Param("window area", 3.0)
    with pytest.raises(ParameterError, match="outside its bounds"):
        Param("g", 1.5, low=0.0, high=1.0)
    with pytest.raises(ParameterError, match="finite"):
        Param("g", float("nan"))


# ============================================================ hand-built network (studies)
def hand_room(ua=40.0, aperture=2.0, ach=0.5, c_slab=5e6, heat_c=20.0, cool_c=26.0,
              vent_on=23.0, vent_share=1.0):
    """Air (thermostat), slab, a massless glazing node, solar = aperture · ghi, night vent."""
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
    net.add_source("room", power=150.0, path="internal")
    net.add_thermostat("room", heating_setpoint=heat_c, cooling_setpoint=cool_c)
    vent = net.add_airflow("out", "room", flow_m3h=300.0, path="ventilation")
    net.add_switch(on=tn.above("room", vent_on), links={vent: (0.0, vent_share)})
    return net


HAND_DEFAULTS = dict(ua=40.0, aperture=2.0, ach=0.5, c_slab=5e6, heat_c=20.0, cool_c=26.0,
                     vent_on=23.0, vent_share=1.0)
HAND_PARAMS = {k: Param(k, v) for k, v in HAND_DEFAULTS.items()}


def hand_table(n=10, seed=3):
    rng = np.random.default_rng(seed)
    return pd.DataFrame({
        "ua": rng.uniform(15, 90, n), "aperture": rng.uniform(0.5, 6, n),
        "ach": rng.uniform(0.1, 1.2, n), "c_slab": rng.uniform(1e6, 1.5e7, n),
        "heat_c": rng.uniform(18, 21, n), "cool_c": rng.uniform(24.5, 27, n),
        "vent_on": rng.uniform(21, 25, n), "vent_share": rng.uniform(0.2, 1.0, n),
    }, index=pd.Index([f"v{i}" for i in range(n)], name="variant"))


OPTS = dict(warmup_days=WARMUP, comfort_node="room", hours_above=(24.0, 25.3),
            degree_hours_above=(24.0,), balance_nodes=["room", "slab"], link_energy=True,
            progress=False)


def test_hand_built_parametric_network_equals_one_by_one_builds():
    """Capacitance, conductance, airflow, source scale, setpoints, a switch's threshold and
    factor varied at once; every result column equal to the builds' to 1e-9."""
    table = hand_table()
    got = studies.run_variants(hand_room(**HAND_PARAMS), table, WEATHER, **OPTS)
    ref = studies.run_variants(hand_room, table, WEATHER, **OPTS)
    assert list(got.columns) == list(ref.columns)
    assert got["error"].isna().all() and ref["error"].isna().all()
    cols = [c for c in ref.columns if c not in table.columns and c != "error"]
    assert rel_err(got[cols], ref[cols]) < 1e-9
    assert got["heating_kwh"].std() > 0 and got["balance:solar"].std() > 0  # rows differ


def test_with_values_is_the_plain_network_of_those_values():
    pnet = hand_room(**HAND_PARAMS)
    row = dict(hand_table(1).iloc[0])
    a = tn.simulate(pnet.with_values(row), WEATHER, warmup_days=WARMUP)
    b = tn.simulate(hand_room(**row), WEATHER, warmup_days=WARMUP)
    assert rel_err(a.temperatures.to_numpy(), b.temperatures.to_numpy()) < 1e-9
    assert rel_err(a.balance(["room"]).sum(), b.balance(["room"]).sum()) < 1e-9
    with pytest.raises(ParameterError, match=r"\['u_wall'\] are not parameters"):
        pnet.with_values(u_wall=0.2)


def test_table_errors_name_the_column_or_row():
    pnet = hand_room(**HAND_PARAMS)
    table = hand_table(3)
    with pytest.raises(ParameterError, match=r"column\(s\) \['u_wall'\] are not parameters"):
        studies.run_variants(pnet, table.assign(u_wall=0.3), WEATHER, **OPTS)
    with pytest.raises(ParameterError, match=r"no column for parameter\(s\) \['ach'\].*ach=0.5"):
        studies.run_variants(pnet, table.drop(columns="ach"), WEATHER, **OPTS)
    bad = table.copy()
    bad.loc["v1", "ua"] = np.nan
    with pytest.raises(ParameterError, match="column 'ua', row 'v1'"):
        studies.run_variants(pnet, bad, WEATHER, **OPTS)


def test_a_row_with_a_negative_conductance_is_named_with_its_link():
    pnet = hand_room(**HAND_PARAMS)
    table = hand_table(4)
    table.loc["v2", "ua"] = -5.0
    with pytest.warns(tn.errors.StudyWarning, match="1 of 4 variants failed"):
        got = studies.run_variants(pnet, table, WEATHER, **OPTS)
    msg = got.at["v2", "error"]
    assert "row 'v2'" in msg and "link 'out-room:opaque' conductance" in msg and "-5.0" in msg
    assert got.drop(index="v2")["error"].isna().all()
    assert got.loc["v2", "heating_kwh"] != got.loc["v2", "heating_kwh"]      # NaN
    with pytest.raises(StudyError, match="row 'v2'.*out-room:opaque"):
        studies.run_variants(pnet, table, WEATHER, errors="raise", **OPTS)


def test_a_parametric_network_is_refused_where_numbers_are_needed():
    pnet = hand_room(**HAND_PARAMS)
    with pytest.raises(NetworkError, match="has parameters.*run_variants.*with_values"):
        tn.simulate(pnet, WEATHER)
    with pytest.raises(ModelFileError, match=r"has parameters: .*ua \[-\] \(default 40\)"):
        dumps(pnet)
    dumps(pnet.with_values())                       # one set of values saves as usual
    with pytest.raises(StudyError, match="has no parameters"):
        studies.run_variants(hand_room(), hand_table(2), WEATHER, **OPTS)


# ==================================================================== builders (add_room)
FLOOR = Construction("floor", [("concrete_2000", 0.2), ("mineral_wool", 0.05)])
#: one fixed node count for the insulation, so that a one-by-one build of any thickness has
#: the chain the parametric network keeps from its default (rc_chain's own choice changes
#: the number of nodes with the thickness)
RC = dict(nodes_per_layer={"mineral_wool": 3})


def room_net(area=3.0, g=0.5, d_ins=0.16, n50=2.0, blind=0.2, cooling=26.0):
    """A room from add_room with a thermostat: a south window (area, g-value, a blind
    switched by the room temperature), an east window, insulated walls, infiltration."""
    wall = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.20),
                                 Layer("mineral_wool", d_ins)])
    blind_dev = MovableShading(blind, control="temperature", on_above=24.0, off_below=22.0,
                               node="r")
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, weather=WEATHER, rc_options=RC,
                    elements=[
                        Element("south", wall, 12.0, 90, 180,
                                windows=[Window("w", area, 1.1, g, shading=blind_dev)]),
                        Element("east", wall, 10.0, 90, 90,
                                windows=[Window("w2", 1.5, 1.1, 0.6)]),
                        Element("floor", FLOOR, 20.0, 180, 0, boundary=18.0)])
    add_infiltration(net, room, n50=n50)
    net.add_source("r", power=200.0, path="internal")
    net.add_thermostat("r", heating_setpoint=20.0, cooling_setpoint=cooling)
    return net


ROOM_PARAMS = dict(area=Param("area", 3.0, "m²"), g=Param("g", 0.5, "-", low=0, high=1),
                   d_ins=Param("d_ins", 0.16, "m"), n50=Param("n50", 2.0, "1/h"),
                   blind=Param("blind", 0.2, "-"), cooling=Param("cooling", 26.0, "°C"))


def room_table(n=8, seed=1):
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"area": rng.uniform(1, 8, n), "g": rng.uniform(0.2, 0.8, n),
                         "d_ins": rng.uniform(0.05, 0.3, n), "n50": rng.uniform(0.5, 6, n),
                         "blind": rng.uniform(0.1, 0.9, n), "cooling": rng.uniform(24, 27, n)})


def test_room_window_area_and_g_value_equal_one_by_one_builds():
    """add_room with a thermostat: window area × g-value (and insulation thickness, n50, a
    blind's factor, the cooling setpoint) per row == room built with those numbers."""
    pnet = room_net(**ROOM_PARAMS)
    nodes = rooms(pnet)["r"].nodes
    table = room_table()
    opts = dict(warmup_days=WARMUP, comfort_node="r", hours_above=(23.5,),
                degree_hours_above=(22.0,), balance_nodes=nodes, progress=False)
    got = studies.run_variants(pnet, table, WEATHER, **opts)
    ref = studies.run_variants(room_net, table, WEATHER, **opts)
    assert list(got.columns) == list(ref.columns)
    assert got["error"].isna().all() and ref["error"].isna().all()
    cols = [c for c in ref.columns if c not in table.columns and c != "error"]
    assert rel_err(got[cols], ref[cols]) < 1e-9
    assert got["balance:solar"].std() > 1.0 and got["cooling_kwh"].std() > 0.1
    # two rows against single simulations of rooms built with their numbers
    for i in (0, 5):
        row = dict(table.iloc[i])
        res = tn.simulate(room_net(**row), WEATHER, warmup_days=WARMUP)
        bal = res.balance(nodes).sum()
        assert rel_err(got.iloc[i]["balance:solar"], bal["solar"]) < 1e-9
        assert rel_err(got.iloc[i]["cooling_kwh"], res.cooling.sum() / 1e3) < 1e-9


def test_a_window_larger_than_its_wall_in_one_row_names_the_row_and_link():
    pnet = pickle.loads(pickle.dumps(room_net(**ROOM_PARAMS)))   # (executors pickle it)
    table = room_table(3)
    table.loc[1, "area"] = 13.0                    # the south wall is 12 m²
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", tn.errors.StudyWarning)
        got = studies.run_variants(pnet, table, WEATHER, warmup_days=WARMUP, progress=False)
    msg = got.at[1, "error"]
    assert "row 1" in msg and "link 'r.south" in msg and "allowed: a finite number ≥ 0" in msg
    assert got.drop(index=1)["error"].isna().all()


def test_add_window_with_parametric_area_and_g():
    area, g = Param("area", 2.0, "m²"), Param("g", 0.6)
    net = tn.Network()
    net.add_node("room", kind="air", capacitance=1e5)
    rec = add_window(net, "room", Window("s", area, 1.2, g), weather=WEATHER)
    assert repr(net.links[rec.link].conductance) == "1.2 * area"
    plain = tn.Network()
    plain.add_node("room", kind="air", capacitance=1e5)
    ref = add_window(plain, "room", Window("s", 3.0, 1.2, 0.4), weather=WEATHER)
    got = net.with_values(area=3.0, g=0.4).sources[rec.sources[0]].power
    assert rel_err(got, plain.sources[ref.sources[0]].power) < 1e-12
    with pytest.raises(ParameterError, match="0 at its defaults"):
        add_window(net, "room", Window("s0", 1.0, 1.2, Param("g0", 0.0)))


def test_insulation_thickness_gives_the_iso6946_u_value():
    """U = 1/(R_si + Σ d/λ + R_se) of the wall of Construction's docstring, worked by hand
    (ISO 6946:2017 §6.9; λ of plaster 0.57, concrete 1.35, mineral wool 0.035 W/(mK))."""
    d = Param("d", 0.16, "m")
    wall = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.20),
                                 Layer("mineral_wool", d)])
    u = wall.u_value()
    for t in (0.05, 0.16, 0.30):
        hand = 1.0 / (0.13 + 0.015 / 0.57 + 0.2 / 1.35 + t / 0.035 + 0.04)
        assert math.isclose(evaluate(u, {"d": [t]})[0], hand, rel_tol=1e-12)


def test_infiltration_from_a_parametric_n50_equals_the_numeric_rate():
    n50 = Param("n50", 3.0, "1/h")
    for kw in ({}, {"unbalanced_flow_m3h": 40.0, "volume": 150.0}):
        rate = infiltration_rate(n50, **kw)
        for v in (0.0, 1.0, 6.0):
            assert math.isclose(evaluate(rate, {"n50": [v]})[0], infiltration_rate(v, **kw),
                                rel_tol=1e-12, abs_tol=1e-15)


def test_a_parametric_blind_factor_needs_a_switch():
    blind = MovableShading(Param("f", 0.3), control="irradiance", on_above=200.0,
                           off_below=100.0)
    net = tn.Network()
    net.add_node("room", kind="air", capacitance=1e5)
    with pytest.raises(ParameterError, match="control='temperature'"):
        add_window(net, "room", Window("s", 2.0, 1.2, 0.5, shading=blind), weather=WEATHER)


def test_traces_threads_and_resume_take_a_parametric_network(tmp_path):
    """variant_traces gives each row's plain network; a thread pool and a resumed study
    (out=) give the same table as one in-process call."""
    from concurrent.futures import ThreadPoolExecutor

    pnet = hand_room(**HAND_PARAMS)
    assert repr(pnet).endswith("; parameters c_slab, ua, ach, aperture, heat_c, cool_c, "
                               "vent_share, vent_on)")
    table = hand_table(6)
    traces = studies.variant_traces(pnet, table.iloc[[2]], WEATHER, warmup_days=WARMUP)
    ref = tn.simulate(hand_room(**dict(table.iloc[2])), WEATHER, warmup_days=WARMUP)
    assert rel_err(traces["v2"].temperatures.to_numpy(), ref.temperatures.to_numpy()) < 1e-9
    base = studies.run_variants(pnet, table, WEATHER, **OPTS)
    with ThreadPoolExecutor(2) as ex:
        threaded = studies.run_variants(pnet, table, WEATHER, executor=ex, chunk_size=2, **OPTS)
    pd.testing.assert_frame_equal(threaded, base)
    studies.run_variants(pnet, table.head(3), WEATHER, out=tmp_path / "s", **OPTS)
    resumed = studies.run_variants(pnet, table, WEATHER, out=tmp_path / "s", **OPTS)
    pd.testing.assert_frame_equal(resumed, base, check_exact=False, rtol=1e-12)


def test_a_row_with_heating_above_cooling_is_named():
    pnet = hand_room(**HAND_PARAMS)
    table = hand_table(3)
    table.loc["v0", "heat_c"] = 27.0
    with pytest.raises(StudyError, match="row 'v0'.*heating setpoint.*exceeds its cooling"):
        studies.run_variants(pnet, table, WEATHER, errors="raise", **OPTS)


def test_calibration_takes_a_parametric_network():
    """Fitting ua and aperture of the parametric room gives the fit of the build function
    (same trials, same numbers)."""
    true = dict(HAND_DEFAULTS, ua=55.0, aperture=3.0)
    sim = tn.simulate(hand_room(**true), WEATHER, warmup_days=WARMUP)
    meas = sim.temperatures[["slab"]] + np.random.default_rng(2).normal(0.0, 0.05,
                                                                          (len(WEATHER), 1))
    spec = {"ua": (40.0, 1.0, 500.0), "aperture": (1.5, 0.0, 20.0)}
    a = studies.calibrate(hand_room(**HAND_PARAMS), spec, WEATHER, meas, warmup_days=WARMUP)
    b = studies.calibrate(lambda ua, aperture: hand_room(ua=ua, aperture=aperture), spec,
                          WEATHER, meas, warmup_days=WARMUP)
    assert rel_err(a.parameters["value"], b.parameters["value"]) < 1e-9
    assert abs(a.parameters.at["ua", "value"] - 55.0) < 4 * a.parameters.at["ua", "std_error"]


def switched_room(ua=40.0, f=0.5, blind=0.3, qh=800.0):
    """A scheduled link, a window switch acting on two links (one scheduled), a blind
    switch on a solar source, a heating capacity."""
    sched = pd.Series(np.where(WEATHER.index.hour % 6 < 3, 30.0, 60.0), index=WEATHER.index)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=2e5)
    net.add_node("mass", kind="mass", capacitance=4e6)
    net.add_link("room", "mass", conductance=100.0, path="internal")
    net.add_link("out", "room", conductance=ua, path="opaque")
    net.add_link("out", "room", conductance=sched, path="ventilation", name="sched")
    sun = net.add_source("mass", power=WEATHER["ghi"] * 2.0, path="solar")
    vent = net.add_airflow("out", "room", flow_m3h=200.0, path="window")
    net.add_switch(on=tn.above("room", 22.0), links={vent: (0.0, f), "sched": (1.0, f)})
    net.add_switch(on=tn.above("mass", 21.0), sources={sun: blind})
    net.add_thermostat("room", heating_setpoint=19.0, max_heating_w=qh)
    return net


def test_switch_factors_with_scheduled_links_and_capacities_equal_builds():
    params = dict(ua=Param("ua", 40.0, "W/K"), f=Param("f", 0.5), blind=Param("blind", 0.3),
                  qh=Param("qh", 800.0, "W"))
    rng = np.random.default_rng(0)
    table = pd.DataFrame({"ua": rng.uniform(10, 80, 6), "f": rng.uniform(0, 1, 6),
                          "blind": rng.uniform(0.1, 1, 6), "qh": rng.uniform(100, 2000, 6)})
    opts = dict(warmup_days=WARMUP, comfort_node="room", balance_nodes=["room", "mass"],
                link_energy=True, progress=False)
    got = studies.run_variants(switched_room(**params), table, WEATHER, **opts)
    ref = studies.run_variants(switched_room, table, WEATHER, **opts)
    cols = [c for c in ref.columns if c not in table.columns and c != "error"]
    assert got["error"].isna().all() and rel_err(got[cols], ref[cols]) < 1e-9
    assert got["heating_kwh"].std() > 1.0
