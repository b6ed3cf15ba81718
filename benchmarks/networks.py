"""Synthetic networks of a chosen size for benchmarks (invented, not check values)."""

import numpy as np
import pandas as pd
import scipy.sparse as sp

import thermonet as tn


def many_rooms(n_rooms: int, layers: int = 8, seed: int = 0, thermostat: bool = False,
               every: int = 1):
    """Rooms in a row, each with an air node and walls discretised into ``layers`` nodes.

    Node count ≈ n_rooms × (1 + 2 × layers). Stiff: air nodes of 1e5 J/K next to
    concrete cells of 1e6 J/K, thin plaster skins of 5e3 J/K. ``thermostat``: heating to
    20 °C in every ``every``-th room.
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
        if thermostat and r % max(every, 1) == 0:
            net.add_thermostat(air, heating_setpoint=20.0)
    return net


def weather(n_hours: int = 8760, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    idx = pd.date_range("2025-01-01 01:00", periods=n_hours, freq="h", tz="Etc/GMT-1")
    t = np.arange(n_hours)
    temp = (9 - 10 * np.cos(2 * np.pi * t / 8760) + 5 * np.sin(2 * np.pi * (t - 9) / 24)
            + rng.normal(0, 1.5, n_hours))
    return pd.DataFrame({"temp_air": temp}, index=idx)


def thermostat_nodes(net) -> list:
    return [t.node for t in net.thermostats.values()]


def matrices(net, weather: pd.DataFrame, sparse: bool = False):
    """``K, E, C, U, order`` of ``C dx/dt = −K x + E [u, P]`` built from the network's links.

    Written here, independently of thermonet's compiler, for the benchmarks' baselines:
    every node must have a capacitance; boundaries are weather columns or numbers; E's last
    columns are one unit power per thermostat node.
    """
    order = list(net.nodes)
    if any(net.nodes[n].capacitance <= 0 for n in order):
        raise ValueError("the baselines need every node capacitive")
    pos = {n: i for i, n in enumerate(order)}
    bnames = list(net.boundaries)
    bpos = {b: j for j, b in enumerate(bnames)}
    srcs = list(net.sources.values())
    therm = thermostat_nodes(net)
    n, nb = len(order), len(bnames)
    K = sp.lil_matrix((n, n))
    E = np.zeros((n, nb + len(srcs) + len(therm)))
    for link in net.links.values():
        g = float(link.conductance)
        ends = [link.a, link.b]
        free = [e for e in ends if e in pos]
        for e in free:
            K[pos[e], pos[e]] += g
        if len(free) == 2:
            K[pos[link.a], pos[link.b]] -= g
            K[pos[link.b], pos[link.a]] -= g
        else:
            other = link.b if link.a in pos else link.a
            E[pos[free[0]], bpos[other]] += g
    for j, s in enumerate(srcs):
        E[pos[s.node], nb + j] = 1.0
    for j, node in enumerate(therm):
        E[pos[node], nb + len(srcs) + j] = 1.0
    U = np.zeros((len(weather), nb + len(srcs)))
    for j, b in enumerate(bnames):
        t = net.boundaries[b].temperature
        U[:, j] = weather[t].to_numpy() if isinstance(t, str) else float(t)
    for j, s in enumerate(srcs):
        U[:, nb + j] = float(s.power)
    C = np.array([net.nodes[x].capacitance for x in order], dtype=float)
    K = K.tocsr() if sparse else K.toarray()
    return K, E, C, U, order
