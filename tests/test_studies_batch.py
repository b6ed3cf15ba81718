"""Studies on the engine's batch path: overheating risk and per-room balances.

Checks (invariants of the method, no outside reference values are needed):

* overheating risk through the batch (:func:`thermonet.studies.overheating_risk`, every run
  stepped by :func:`thermonet.engine.batch.run_batch` with the criteria judged on the kept
  traces) gives the same criterion values (to 1e-9) and the same pass/fail verdicts as the
  same runs simulated one by one with :func:`thermonet.simulate` and judged alone;
* the annual balance of a named room from a study (``balance_rooms=``, columns
  ``balance[<room>]:<path>``) equals ``Results.balance(room.nodes)`` of a single
  simulation, and every room's balance closes (the residual is rounding noise: the sign
  convention and closure of docs/glossary.md "Balance columns").

The weather is three summer weeks of the INVENTED Fernhollow sample year (demo data, used
only to drive both sides of each comparison, never as a check value).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import comfort, studies
from thermonet import weather as tw
from thermonet.builders import (
    Element,
    Window,
    add_buffer,
    add_buffer_exchange,
    add_infiltration,
    add_room,
    add_ventilation,
    rooms,
)
from thermonet.constructions import Construction
from thermonet.scenarios.sample_weather import load_sample_weather
from thermonet.studies.risk import RiskRun

WALL = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.15),
                             ("mineral_wool", 0.14)])
ROOF = Construction("roof", [("gypsum_plasterboard_700", 0.0125), ("mineral_wool", 0.22)])
FLOOR = Construction("floor", [("concrete_2000", 0.20), ("mineral_wool", 0.10)])


def _weather() -> pd.DataFrame:
    w = load_sample_weather()
    attrs = dict(w.attrs)
    part = w.loc["2025-06-20 01:00":"2025-07-11 00:00"].copy()
    part.attrs = attrs
    return tw.add_sky_temperature(part)


WEATHER = _weather()
OCCUPIED = ("09:00", "22:00")


def flat(g_value=0.6, gains_w=200.0, n50=3.0, weather=None):
    """A sunny room and a stair next to it (two builder rooms), and the room's record."""
    w = WEATHER if weather is None else weather
    net = tn.Network()
    stair = add_buffer(net, "stair", floor_area=8.0, height=6.0, weather=w, elements=[
        Element("north", WALL, 18.0, 90, 0, windows=[Window("stair_window", 1.5, 1.3, 0.6)]),
        Element("roof", ROOF, 8.0, 0, 180)])
    room = add_room(net, "living", floor_area=20.0, height=2.5, weather=w, elements=[
        Element("west", WALL, 12.0, 90, 270,
                windows=[Window("west_glazing", 2.5, 1.1, float(g_value))]),
        Element("roof", ROOF, 20.0, 0, 180),
        Element("floor", FLOOR, 20.0, 180, 0, boundary="outdoor"),
        Element("to_stair", WALL, 10.0, 90, 90, boundary=stair)])
    add_infiltration(net, room, n50=float(n50))
    add_infiltration(net, stair, n50=3.0)
    add_buffer_exchange(net, room, stair, flow_m3h=10.0)
    add_ventilation(net, room, flow_m3h=150.0)
    net.add_source(room.air, power=float(gains_w), path="internal")
    return net, room


def operative(res, room) -> pd.Series:
    return comfort.room_operative_temperature(res, room)


CRITERIA = [
    studies.hours_above_criterion(26.0, max_pct=3.0, occupied=OCCUPIED),
    studies.hours_above_criterion(27.0, max_hours=20.0, occupied=OCCUPIED),
    studies.degree_hours_criterion(26.0, 40.0, occupied=OCCUPIED),
    studies.adaptive_criterion("II", max_hours=10.0, occupied=OCCUPIED),
    studies.tm52_criterion(occupied=OCCUPIED),
    studies.tm59_criterion("bedroom"),
]


def test_risk_through_the_batch_equals_one_by_one_simulations():
    risk = studies.overheating_risk(
        flat, {"clear glass": {"g_value": 0.6}, "solar glass": {"g_value": 0.3}},
        {"gains_w": (100.0, 600.0), "n50": (1.0, 6.0)}, WEATHER, temperature=operative,
        criteria=CRITERIA, warming=(0.0, 3.0), pass_weather=True, n_samples=4, seed=3,
        warmup_days=3.0, chunk_size=3, progress=False)
    runs = risk.runs
    assert runs["error"].isna().all()
    keys = [c.key for c in CRITERIA]
    assert len(runs) == 8
    for label, row in runs.iterrows():
        off = row[studies.WARMING]
        w = WEATHER.copy()
        w["temp_air"] = w["temp_air"] + off
        net, room = flat(row["g_value"], row["gains_w"], row["n50"], weather=w)
        res = tn.simulate(net, w, warmup_days=3.0)
        run = RiskRun(res, room, w, {}, operative)    # judged alone, no merged calls
        for c in CRITERIA:
            ref = c.evaluate(run)
            got = row[c.key]
            assert math.isclose(got, ref, rel_tol=1e-9, abs_tol=1e-9), (label, c.key, got, ref)
            assert bool(row[f"failed:{c.key}"]) == bool(c.fails(ref)), (label, c.key)
    # the comparison can fail: the verdicts differ between runs for some criterion
    flags = runs[[f"failed:{k}" for k in keys]].to_numpy(dtype=bool)
    assert (flags.any(axis=0) & ~flags.all(axis=0)).any()


def test_balance_of_named_rooms_equals_results_balance_and_closes():
    params = pd.DataFrame({"g_value": [0.3, 0.6], "gains_w": [150.0, 450.0]})
    table = studies.run_variants(flat, params, WEATHER, balance_rooms="all",
                                 balance_nodes={"air only": ["living"]}, warmup_days=3.0,
                                 progress=False)
    assert table["error"].isna().all()
    for label, kw in params.iterrows():
        net, _ = flat(**kw.to_dict())
        res = tn.simulate(net, WEATHER, warmup_days=3.0)
        recorded = rooms(net)
        assert set(recorded) == {"living", "stair"}
        for name, rec in recorded.items():
            ref = res.balance(rec.nodes).sum()
            cols = [c for c in table.columns if c.startswith(f"balance[{name}]:")]
            got = table.loc[label, cols].rename(lambda c: c.split(":", 1)[1])
            assert set(got.index) == set(ref.index)
            scale = ref.drop("residual", errors="ignore").abs().max()
            for path, value in ref.items():
                if path == "residual":
                    continue
                assert math.isclose(got[path], value, rel_tol=1e-9, abs_tol=1e-9 * scale), \
                    (name, path, got[path], value)
            # the room's balance closes: the residual is rounding noise
            assert abs(got["residual"]) <= 1e-9 * scale, (name, got["residual"], scale)
            assert got["solar"] > 0.0 and got["infiltration"] < 0.0
        # the labelled node set is kept beside the rooms
        air = res.balance(["living"]).sum()
        assert math.isclose(table.loc[label, "balance[air only]:solar"], air["solar"],
                            rel_tol=1e-9)


def test_named_rooms_are_checked_by_name():
    params = pd.DataFrame({"g_value": [0.5]})
    t = studies.run_variants(flat, params, WEATHER, balance_rooms=["living"], warmup_days=0.0,
                             progress=False)
    assert [c for c in t.columns if c.startswith("balance[stair]")] == []
    assert "balance[living]:storage" in t.columns
    # a room's columns are selected by a pattern with its name in brackets
    sel = studies.run_variants(flat, params, WEATHER, balance_rooms="all", warmup_days=0.0,
                               outputs=["balance[stair]:*"], progress=False)
    assert sorted(sel.columns[1:-1]) == sorted(c for c in sel.columns
                                               if c.startswith("balance[stair]:"))
    assert "balance[stair]:residual" in sel.columns
    with pytest.warns(studies.variants.StudyWarning, match="1 of 1 variants failed"):
        bad = studies.run_variants(flat, params, WEATHER, balance_rooms=["kitchen"],
                                   warmup_days=0.0, progress=False)
    msg = bad.loc[0, "error"]
    assert "'kitchen'" in msg and "living" in msg and "stair" in msg
    with pytest.raises(studies.variants.StudyError, match="also room names"):
        studies.run_variants(flat, params, WEATHER, balance_rooms="all",
                             balance_nodes={"living": ["living"]}, warmup_days=0.0,
                             progress=False, errors="raise")
    with pytest.raises(studies.variants.StudyError, match="warming='dt'.*column"):
        studies.run_variants(flat, params, WEATHER, warming="dt")


def test_judge_values_become_columns_and_warming_reaches_the_weather():
    params = pd.DataFrame({"g_value": [0.4, 0.4], "dt": [0.0, 2.0]})

    def judge(res, handles, row, weather):
        return {"mean_outdoor_c": float(weather["temp_air"].mean()),
                "mean_operative_c": float(operative(res, handles).mean()),
                "dt_seen_k": row["dt"]}

    t = studies.run_variants(flat, params, WEATHER, judge=judge, warming="dt",
                             pass_weather=True, warmup_days=1.0, progress=False)
    mean = WEATHER["temp_air"].mean()
    np.testing.assert_allclose(t["mean_outdoor_c"], [mean, mean + 2.0], rtol=1e-12)
    np.testing.assert_array_equal(t["dt_seen_k"], [0.0, 2.0])
    # a warmer outdoors warms the room (direction check)
    assert t.loc[1, "mean_operative_c"] > t.loc[0, "mean_operative_c"] + 0.5


def test_judged_values_do_not_depend_on_how_the_traces_are_batched():
    params = pd.DataFrame({"g_value": [0.3, 0.5, 0.7], "gains_w": [100.0, 300.0, 500.0]})

    def judge(res, handles, row, weather):
        return {"mean_operative_c": float(operative(res, handles).mean())}

    kw = dict(judge=judge, balance_rooms="all", warmup_days=1.0, progress=False)
    whole = studies.run_variants(flat, params, WEATHER, **kw)
    # a budget below one variant's traces: every variant is judged in its own batch
    one_by_one = studies.run_variants(flat, params, WEATHER, max_bytes=1.0, **kw)
    pd.testing.assert_frame_equal(whole, one_by_one)
