"""Regression tables: numbers a refactor of the engine must keep.

Runs a fixed set of invented networks through the public API (single runs with every method
and kernel, switches, schedules, massless and stiff nodes, thermostats, re-linearised
radiation, sub-hourly steps, batches and studies) and writes every result array to an
``.npz`` file. Compare two such files with ``--compare``::

    python benchmarks/regression.py --out before.npz        # on the old code
    python benchmarks/regression.py --out after.npz         # on the new code
    python benchmarks/regression.py --compare before.npz after.npz

The comparison prints, per array, the largest absolute difference and the largest
difference relative to the array's largest magnitude. The networks and weather are invented
(benchmarks/networks.py and the demo's sample year) and are not check values.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import networks  # noqa: E402

import thermonet as tn  # noqa: E402


def _readme_net(ua=40.0, cap=8e6, gain=200.0):
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.2e5)
    net.add_node("slab", kind="mass", capacitance=cap)
    net.add_link("room", "slab", conductance=150.0, path="internal")
    net.add_link("outdoor", "room", conductance=ua, path="opaque")
    net.add_airflow("outdoor", "room", flow_m3h=30.0, path="infiltration")
    net.add_source("room", power=gain, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0, max_heating_w=3000.0)
    return net


def _switched_net(w, ua=25.0, limit=2000.0):
    """Room with a massless surface, two thermostats, a window switch and a schedule."""
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_boundary("ground", temperature=10.0)
    net.add_node("air", kind="air", capacitance=1.5e5)
    net.add_node("surf", kind="surface", capacitance=0.0)
    net.add_node("wall", kind="mass", capacitance=6e6)
    net.add_node("air2", kind="air", capacitance=1.0e5)
    net.add_link("air", "surf", conductance=90.0, path="internal")
    net.add_link("surf", "wall", conductance=300.0, path="internal")
    net.add_link("wall", "outdoor", conductance=ua, path="opaque")
    net.add_link("air", "air2", conductance=30.0, path="internal")
    net.add_link("air2", "ground", conductance=15.0, path="ground")
    sched = pd.Series(np.where(w.index.hour.isin(range(8, 18)), 20.0, 8.0), index=w.index)
    net.add_airflow("outdoor", "air", flow_m3h=sched, path="ventilation")
    win = net.add_airflow("outdoor", "air", flow_m3h=200.0, path="window", name="win")
    net.add_switch(on=tn.above("air", 24.0) & tn.warmer("air", "outdoor", 1.0),
                   off=tn.below("air", 22.0), links={win: (0.0, 1.0)})
    gains = pd.Series(400 + 300 * np.sin(np.arange(len(w)) * 2 * np.pi / 24), index=w.index)
    net.add_source("surf", power=gains, path="solar")
    net.add_source("air2", power=150.0, path="internal")
    net.add_thermostat("air", heating_setpoint=20.0, cooling_setpoint=26.0,
                       max_heating_w=limit, max_cooling_w=1500.0)
    net.add_thermostat("air2", heating_setpoint=18.0, max_heating_w=800.0)
    return net


def _stiff_net():
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("a", capacitance=1e6)
    net.add_node("b", capacitance=1e-3)
    net.add_node("c", capacitance=1e4)
    net.add_link("out", "a", conductance=10.0, path="opaque")
    net.add_link("a", "b", conductance=1e4, path="internal")
    net.add_link("b", "c", conductance=5.0, path="internal")
    net.add_source("c", power=50.0, path="internal")
    return net


def _radiation_net():
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("air", kind="air", capacitance=1e5)
    net.add_node("s1", kind="surface", capacitance=2e5)
    net.add_node("s2", kind="surface", capacitance=3e5)
    net.add_link("outdoor", "s1", conductance=20.0, path="opaque")
    net.add_link("outdoor", "s2", conductance=10.0, path="glazing")
    net.add_link("air", "s1", conductance=40.0, path="internal")
    net.add_link("air", "s2", conductance=30.0, path="internal")
    net.add_radiation("s1", "s2", area=12.0, path="internal")
    net.add_source("air", power=300.0, path="internal")
    return net


HOLD: dict = {}   # {"interpolate": ()} with --hold: inputs held over each step, as before


def _sim(out: dict, key: str, net, weather, **kw) -> None:
    res = tn.simulate(net, weather, **HOLD, **kw)
    out[f"{key}/T"] = res.temperatures.to_numpy()
    out[f"{key}/Tmean"] = res.mean_temperatures.to_numpy()
    out[f"{key}/flows"] = res.flows.to_numpy()
    out[f"{key}/heating"] = res.heating.to_numpy()
    out[f"{key}/cooling"] = res.cooling.to_numpy()
    out[f"{key}/balance"] = res.balance(list(net.nodes), freq="MS").to_numpy()


def run(path: str) -> None:
    from thermonet import studies
    from thermonet.scenarios import sunny_room as sr
    from thermonet.scenarios.sample_weather import load_sample_weather

    warnings.simplefilter("ignore")
    out: dict[str, np.ndarray] = {}
    w = load_sample_weather()
    for kernel in ("numba", "numpy"):
        _sim(out, f"readme/{kernel}", _readme_net(), w, kernel=kernel)
    w2 = w.iloc[:24 * 60]
    _sim(out, "switched/numba", _switched_net(w2), w2, kernel="numba")
    _sim(out, "switched/numpy", _switched_net(w2), w2, kernel="numpy")
    _sim(out, "switched/15min", _switched_net(w2), w2, step="15min")
    _sim(out, "stiff", _stiff_net(), w.iloc[:24 * 30])
    _sim(out, "radiation", _radiation_net(), w.iloc[:24 * 60], relinearise="D")
    wb = networks.weather(24 * 40)
    _sim(out, "rooms10/exact", networks.many_rooms(10, thermostat=True), wb)
    _sim(out, "rooms10/sparse", networks.many_rooms(10, thermostat=True), wb, method="sparse")
    _sim(out, "rooms10free/sparse", networks.many_rooms(10), wb, method="sparse")
    _sim(out, "rooms10free/exact", networks.many_rooms(10), wb)
    _sim(out, "rooms12free/exact-modal", networks.many_rooms(12), wb)
    _sim(out, "switched/sparse", _switched_net(w2), w2, method="sparse")
    sw = sr.prepare_weather(hours=24 * 90)
    for opt in ({}, {"night_ventilation": True}, {"external_blinds": True}):
        net, h = sr.build_sunny_room(sw, **opt)
        key = "sunny/" + ("-".join(opt) or "baseline")
        _sim(out, key, net, sw)

    params = pd.DataFrame({"ua": np.linspace(20, 80, 7), "cap": np.linspace(2e6, 1e7, 7),
                           "gain": np.linspace(100, 400, 7)})
    tab = studies.run_variants(_readme_net, params, w, comfort_node="room",
                               balance_nodes=["room", "slab"], progress=False, **HOLD)
    out["study/readme"] = tab.select_dtypes("number").to_numpy()

    def build_sw(ua, limit):
        return _switched_net(w2, ua, limit)

    params = pd.DataFrame({"ua": [15.0, 25.0, 35.0], "limit": [800.0, 1500.0, 3000.0]})
    tab = studies.run_variants(build_sw, params, w2, comfort_node="air",
                               balance_nodes=["air", "surf", "wall"], progress=False, **HOLD)
    out["study/switched"] = tab.select_dtypes("number").to_numpy()
    np.savez_compressed(path, **out)
    print(f"wrote {len(out)} arrays to {path}")


def compare(a: str, b: str) -> int:
    A, B = np.load(a), np.load(b)
    worst = 0.0
    rows = []
    for key in sorted(set(A.files) | set(B.files)):
        if key not in A.files or key not in B.files:
            rows.append((key, "missing in " + (b if key in A.files else a), "", ""))
            worst = np.inf
            continue
        x, y = A[key], B[key]
        if x.shape != y.shape:
            rows.append((key, f"shape {x.shape} vs {y.shape}", "", ""))
            worst = np.inf
            continue
        d = np.abs(x - y)
        d = d[np.isfinite(d)] if d.size else d
        nan_same = np.array_equal(np.isnan(x), np.isnan(y))
        ad = float(d.max()) if d.size else 0.0
        scale = float(np.nanmax(np.abs(x))) if x.size and np.isfinite(x).any() else 1.0
        rd = ad / max(scale, 1e-300)
        worst = max(worst, rd)
        rows.append((key, f"{ad:.3g}", f"{rd:.3g}", "" if nan_same else "NaN pattern differs"))
    width = max(len(r[0]) for r in rows)
    print(f"{'array':<{width}}  {'max |Δ|':>10}  {'max |Δ|/max|x|':>15}")
    for r in rows:
        print(f"{r[0]:<{width}}  {r[1]:>10}  {r[2]:>15}  {r[3]}")
    print(f"worst relative difference: {worst:.3g}")
    return 0


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--out", default="regression.npz")
    p.add_argument("--compare", nargs=2, metavar=("BEFORE", "AFTER"))
    p.add_argument("--hold", action="store_true",
                   help="hold every input over its step (interpolate=()), the timing of "
                        "versions before the first-order hold of instantaneous weather values")
    args = p.parse_args()
    if args.hold:
        HOLD["interpolate"] = ()
    if args.compare:
        return compare(*args.compare)
    run(args.out)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
