"""Memory you can steer: ``simulate(..., outputs=...)`` keeps only some nodes' results and the
balances of named control volumes, with the same numbers as a run that keeps everything; a
run over its memory budget warns first. (Invariants of the implementation, no outside source:
keeping fewer columns must not change any number.)"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.errors import MemoryBudgetWarning, NetworkError

TZ = "Etc/GMT-1"
N = 24 * 6
IDX = pd.date_range("2025-02-01 01:00", periods=N, freq="h", tz=TZ)
WEATHER = pd.DataFrame({"temp_air": 3 + 6 * np.sin(np.arange(N) / 24 * 2 * np.pi)}, index=IDX)


def rooms(n=6, thermostat=False):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    for r in range(n):
        net.add_node(f"air{r}", kind="air", capacitance=1.2e5)
        net.add_node(f"wall{r}", kind="mass", capacitance=4e6)
        net.add_node(f"skin{r}", kind="surface", capacitance=0.0)
        net.add_link(f"air{r}", f"skin{r}", conductance=60.0, path="internal")
        net.add_link(f"skin{r}", f"wall{r}", conductance=200.0, path="internal")
        net.add_link(f"wall{r}", "out", conductance=20.0, path="opaque")
        net.add_airflow("out", f"air{r}", flow_m3h=40.0, path="infiltration")
        net.add_source(f"air{r}", power=150.0 + 10 * r, path="internal")
        if r:
            net.add_link(f"air{r - 1}", f"air{r}", conductance=15.0, path="internal")
        if thermostat:
            net.add_thermostat(f"air{r}", heating_setpoint=19.0)
    return net


@pytest.mark.parametrize("method", ["exact", "sparse"])
@pytest.mark.parametrize("thermostat", [False, True])
def test_kept_balances_and_nodes_equal_the_full_run(method, thermostat):
    net = rooms(thermostat=thermostat)
    full = tn.simulate(net, WEATHER, method=method, warmup_days=1)
    vol = ["air2", "wall2", "skin2"]
    part = tn.simulate(net, WEATHER, method=method, warmup_days=1,
                       outputs={"nodes": ["air0"], "balances": [vol]})
    pd.testing.assert_frame_equal(part.balance(vol), full.balance(vol), rtol=1e-12, atol=1e-9)
    assert "air0" in part.temperatures and "air4" not in part.temperatures
    np.testing.assert_allclose(part.temperatures["air0"], full.temperatures["air0"], atol=1e-12)
    assert set(part.flows.columns) < set(full.flows.columns)
    if method == "sparse":    # nodes not kept cannot be asked for
        with pytest.raises(NetworkError, match="not kept"):
            part.balance(["air4"])


def test_memory_budget_warns_before_the_run():
    net = rooms(2)
    with pytest.warns(MemoryBudgetWarning, match="outputs="):
        tn.simulate(net, WEATHER, memory_budget=1e3)
    with pytest.raises(NetworkError, match="not a free node"):
        tn.simulate(net, WEATHER, outputs=["nowhere"])
    with pytest.raises(ValueError, match="outputs= keys"):
        tn.simulate(net, WEATHER, outputs={"temperatures": ["air0"]})
