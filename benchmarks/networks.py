"""Synthetic networks of a chosen size for benchmarks (invented, not check values)."""

import numpy as np
import pandas as pd

import thermonet as tn


def many_rooms(n_rooms: int, layers: int = 8, seed: int = 0, thermostat: bool = False):
    """Rooms in a row, each with an air node and walls discretised into ``layers`` nodes.

    Node count ≈ n_rooms × (1 + 2 × layers). Stiff: air nodes of 1e5 J/K next to
    concrete cells of 1e6 J/K, thin plaster skins of 5e3 J/K.
    """
    rng = np.random.default_rng(seed)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    for r in range(n_rooms):
        net.add_node(f"air{r}", kind="air", capacitance=rng.uniform(0.8e5, 1.5e5))
    for r in range(n_rooms):
        air = f"air{r}"
        net.add_airflow("out", air, flow_m3h=rng.uniform(20, 80), path="infiltration")
        net.add_source(air, power=rng.uniform(100, 300), path="internal")
        for wall in ("ext", "int"):
            prev = air
            for k in range(layers):
                cap = 5e3 if k == 0 else rng.uniform(0.5e6, 1.5e6)
                node = net.add_node(f"{wall}{r}_{k}", kind="mass" if k else "surface",
                                    capacitance=cap)
                g = 80.0 if k == 0 else rng.uniform(150, 400)
                net.add_link(prev, node, conductance=g, path="internal" if k == 0 else wall)
                prev = node
            if wall == "ext":
                net.add_link(prev, "out", conductance=rng.uniform(20, 40), path="opaque")
            elif r + 1 < n_rooms:
                net.add_link(prev, f"air{r + 1}", conductance=60.0, path="internal")
            else:
                net.add_link(prev, "out", conductance=10.0, path="opaque")
        if thermostat:
            net.add_thermostat(air, heating_setpoint=20.0)
    return net


def weather(n_hours: int = 8760, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    idx = pd.date_range("2025-01-01 01:00", periods=n_hours, freq="h", tz="Etc/GMT-1")
    t = np.arange(n_hours)
    temp = (9 - 10 * np.cos(2 * np.pi * t / 8760) + 5 * np.sin(2 * np.pi * (t - 9) / 24)
            + rng.normal(0, 1.5, n_hours))
    return pd.DataFrame({"temp_air": temp}, index=idx)
