"""Speed and memory of a design study: 10,000 variant-years of a 10-node room (no assertions).

The study: a room with 10 free nodes (air, a four-layer wall, a three-layer floor on
ground, glazing, furniture) and a heating/cooling thermostat, 10,000 variants drawn at random
(wall and glazing conductances, infiltration, internal gains, capacities, setpoints), one
typical year each (8,760 h after a 14-day warm-up), through
:func:`thermonet.studies.run_variants` with every annual result kept: heating and cooling
energy and peaks, overheating hours and degree-hours at the air node, and the annual balance
of the air node by heat path.

Printed:

* ms per variant-year of the whole study call (building the networks included);
* peak memory while it runs: resident-set growth over the process's size before the call,
  sampled every 20 ms (tracemalloc is not used: it slows Python allocations severalfold and
  does not see numba's);
* the same quantities from one-at-a-time runs (``thermonet.simulate``, ``Results.summary``,
  ``Results.balance`` and ``Results.temperatures`` per variant) on a sample of the same
  variants, extrapolated to 10,000, and the ratio;
* the largest relative difference between the study's table and the one-at-a-time results on
  that sample (they must agree to rounding).

A second case (``--case window``, issue 12): 10,000 variant-years of a room from
:func:`thermonet.builders.add_room` with a thermostat, its south window's area and g-value
varied per variant, comfort (hours and degree-hours above 25 °C at the air node) and the
annual balance of the room by path, run as a *parametric network*
(:mod:`thermonet.parameters`: declared once, no network built per variant). Printed: ms per
variant-year including the parameter setup (building the parametric room and compiling it),
the same study through ``build(**row)`` (on a sample of rows, extrapolated), a one-by-one
loop of build + ``thermonet.simulate`` (timed on a sample, extrapolated, and said so), the
ratios, and the largest relative difference of the parametric table from the one-by-one
results on that sample. ``--repeat R`` runs the timed parts R times and keeps the minimum
(the machine may be shared).

Run: ``python benchmarks/bench_variants.py [--case room10|window|all] [--variants N]
[--sample K] [--repeat R]``.
"""

from __future__ import annotations

import argparse
import math
import os
import resource
import sys
import threading
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).parent))
import networks  # noqa: E402

import thermonet as tn  # noqa: E402
from thermonet import studies  # noqa: E402


def build(g_out=25.0, g_glass=90.0, flow_m3h=45.0, gains_w=250.0, c_air=1.5e5, c_slab=6e6,
          c_furniture=5e5, heating_c=20.0, cooling_c=26.0):
    """A 10-node room: g [W/K], flow [m³/h], gains [W], capacities [J/K], setpoints [°C]."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("ground", temperature=9.0, kind="ground")
    net.add_node("air", kind="air", capacitance=c_air)
    for k, (c, g) in enumerate([(5e3, 120.0), (2e6, 300.0), (3e6, 250.0), (1e6, 40.0)]):
        net.add_node(f"w{k}", kind="mass", capacitance=c)
        net.add_link("air" if k == 0 else f"w{k - 1}", f"w{k}", conductance=g, path="opaque")
    net.add_link("w3", "out", conductance=g_out, path="opaque")
    for k, (c, g) in enumerate([(4e3, 150.0), (c_slab, 400.0), (8e6, 300.0)]):
        net.add_node(f"s{k}", kind="mass", capacitance=c)
        net.add_link("air" if k == 0 else f"s{k - 1}", f"s{k}", conductance=g, path="ground")
    net.add_link("s2", "ground", conductance=20.0, path="ground")
    net.add_node("glass", kind="surface", capacitance=2e3)
    net.add_link("air", "glass", conductance=60.0, path="glazing")
    net.add_link("glass", "out", conductance=g_glass, path="glazing")
    net.add_node("furniture", kind="mass", capacitance=c_furniture)
    net.add_link("air", "furniture", conductance=80.0, path="internal")
    net.add_airflow("out", "air", flow_m3h=flow_m3h, path="infiltration")
    net.add_source("air", power=gains_w, path="internal")
    net.add_thermostat("air", heating_setpoint=heating_c, cooling_setpoint=cooling_c)
    return net


def variants(n: int, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    return pd.DataFrame({
        "g_out": rng.uniform(8.0, 60.0, n), "g_glass": rng.uniform(30.0, 150.0, n),
        "flow_m3h": rng.uniform(10.0, 120.0, n), "gains_w": rng.uniform(100.0, 900.0, n),
        "c_air": rng.uniform(1e5, 4e5, n), "c_slab": rng.uniform(2e6, 1.2e7, n),
        "c_furniture": rng.uniform(1e5, 2e6, n), "heating_c": rng.uniform(18.0, 21.0, n),
        "cooling_c": rng.uniform(24.0, 27.0, n)})


OPTIONS = dict(comfort_node="air", hours_above=(25.0, 26.0), degree_hours_above=(25.0,),
               balance_nodes=["air"])


def one_at_a_time(row: dict, weather: pd.DataFrame) -> dict:
    """The same results from thermonet.simulate and the Results tables."""
    res = tn.simulate(build(**row), weather)
    s = res.summary()
    t = res.temperatures["air"]
    out = dict(s)
    out["hours_above_25"] = float((t > 25.0).sum())
    out["hours_above_26"] = float((t > 26.0).sum())
    out["degree_hours_above_25"] = float((t - 25.0).clip(lower=0).sum())
    out["max_temperature_c"] = float(t.max())
    out["mean_temperature_c"] = float(t.mean())
    for k, v in res.balance(["air"]).sum().items():
        out[f"balance:{k}"] = float(v)
    return out


class RssSampler:
    """Largest resident-set size [bytes] seen while running (Linux /proc, else ru_maxrss)."""

    def __init__(self, period: float = 0.02):
        self.period = period
        self.peak = 0
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)

    @staticmethod
    def rss() -> int:
        try:
            with open("/proc/self/statm") as f:
                return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
        except OSError:  # not Linux: the process's high-water mark (KiB on Linux, B on macOS)
            return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024

    def _run(self):
        while not self._stop.is_set():
            self.peak = max(self.peak, self.rss())
            time.sleep(self.period)

    def __enter__(self):
        self.start = self.rss()
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()
        self.peak = max(self.peak, self.rss())


# ======================================================================= window case
WINDOW_OPTIONS = dict(comfort_node="room", hours_above=(25.0,), degree_hours_above=(25.0,))


def window_weather() -> pd.DataFrame:
    """The invented Fernhollow year with a sky temperature (not check values)."""
    from thermonet.scenarios.sample_weather import load_sample_weather

    w = load_sample_weather()
    return w if "temp_sky" in w else tn.weather.add_sky_temperature(w)


def window_room(area=3.0, g=0.5, weather=None):
    """A room from add_room: south wall with a window of ``area`` [m²] and ``g`` [-], a
    floor over a space at 18 °C, heating to 20 °C and cooling to 26 °C (6 capacitive
    nodes with two nodes per layer)."""
    from thermonet.builders import Element, Window, add_room
    from thermonet.constructions import Construction

    wall = Construction("wall", [("concrete_2000", 0.20), ("mineral_wool", 0.16)])
    floor = Construction("floor", [("concrete_2000", 0.15)])
    net = tn.Network()
    add_room(net, "room", floor_area=20.0, height=2.6, weather=weather,
             rc_options=dict(nodes_per_layer=2), elements=[
                 Element("south", wall, 10.0, 90, 180, windows=[Window("win", area, 1.1, g)]),
                 Element("floor", floor, 20.0, 180, 0, boundary=18.0)])
    net.add_source("room", power=180.0, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0, cooling_setpoint=26.0)
    return net


def window_variants(n: int, seed: int = 1) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"area": rng.uniform(1.0, 8.0, n), "g": rng.uniform(0.25, 0.75, n)})


def window_one_by_one(row: dict, weather: pd.DataFrame, nodes: list) -> dict:
    """One variant: build + thermonet.simulate + the study's columns from Results."""
    res = tn.simulate(window_room(weather=weather, **row), weather)
    t = res.temperatures["room"]
    out = dict(res.summary())
    out["hours_above_25"] = float((t > 25.0).sum())
    out["degree_hours_above_25"] = float((t - 25.0).clip(lower=0).sum())
    for k, v in res.balance(nodes).sum().items():
        out[f"balance:{k}"] = float(v)
    return out


def window_case(args) -> None:
    from thermonet.builders import rooms
    from thermonet.parameters import Param

    weather = window_weather()
    params = window_variants(args.variants)
    probe = window_room(weather=weather)
    nodes = rooms(probe)["room"].nodes
    n_cap = sum(1 for n in probe.nodes.values() if n.capacitance > 0)
    print(f"\nwindow case: {args.variants} variants × {len(weather)} h, room from add_room "
          f"({len(probe.nodes)} free nodes, {n_cap} capacitive), thermostat, window area and "
          f"g-value varied; comfort and balance outputs; {os.cpu_count()} CPU(s)")
    opts = dict(WINDOW_OPTIONS, balance_nodes=nodes)

    def parametric(table):
        pnet = window_room(Param("area", 3.0, "m²"), Param("g", 0.5, "-"), weather=weather)
        return studies.run_variants(pnet, table, weather, progress=False, **opts)

    def built(table):
        return studies.run_variants(lambda **kw: window_room(weather=weather, **kw), table,
                                    weather, progress=False, **opts)

    parametric(params.head(64))          # warm-up: numba, imports
    built(params.head(8))
    window_one_by_one(params.iloc[0].to_dict(), weather, nodes)
    t_par, table = math.inf, None
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        table = parametric(params)
        t_par = min(t_par, time.perf_counter() - t0)
    per = t_par / args.variants * 1e3
    print(f"parametric study: {t_par:.2f} s = {per:.3f} ms per variant-year (parameter setup, "
          f"compile and outputs included; min of {args.repeat}); "
          f"{int(table['error'].notna().sum())} failed")
    kb = min(args.build_sample, args.variants)
    t_b = math.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        built(params.head(kb))
        t_b = min(t_b, (time.perf_counter() - t0) / kb)
    print(f"build(**row) study: {t_b * 1e3:.3f} ms per variant-year (first {kb} rows, "
          f"extrapolated: {t_b * args.variants:.0f} s for {args.variants}); ratio "
          f"{t_b * 1e3 / per:.1f}×")
    k = min(args.sample, args.variants)
    rows = params.iloc[np.linspace(0, args.variants - 1, k).astype(int)]
    t_one, ref = math.inf, {}
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        ref = {i: window_one_by_one(r, weather, nodes)
               for i, r in zip(rows.index, rows.to_dict("records"), strict=True)}
        t_one = min(t_one, (time.perf_counter() - t0) / k)
    print(f"one-by-one loop (build + simulate): {t_one * 1e3:.1f} ms per variant-year, timed on "
          f"a sample of {k} and extrapolated: {t_one * args.variants:.0f} s for "
          f"{args.variants}")
    print(f"ratio (one-by-one loop / parametric study): {t_one * 1e3 / per:.1f}×")
    worst = 0.0
    for i, d in ref.items():
        for key, v in d.items():
            if key in table.columns:
                worst = max(worst, abs(table.at[i, key] - v) / max(1.0, abs(v)))
    print(f"largest relative difference parametric vs one-by-one: {worst:.1e}")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--case", choices=("room10", "window", "all"), default="all")
    ap.add_argument("--variants", type=int, default=10_000)
    ap.add_argument("--sample", type=int, default=20, help="one-at-a-time runs to time")
    ap.add_argument("--build-sample", type=int, default=1000,
                    help="rows of the build(**row) form timed in the window case")
    ap.add_argument("--repeat", type=int, default=1, help="repeat timings, keep the minimum")
    args = ap.parse_args()
    if args.case in ("room10", "all"):
        room10_case(args)
    if args.case in ("window", "all"):
        window_case(args)


def room10_case(args):
    weather = networks.weather()
    params = variants(args.variants)
    print(f"{args.variants} variants × {len(weather)} h, 10 free nodes, thermostat; "
          f"{os.cpu_count()} CPU(s)")

    # warm-up: numba compilation (cached on disk after the first run) and imports
    studies.run_variants(build, params.head(64), weather, progress=False, **OPTIONS)
    one_at_a_time(params.iloc[0].to_dict(), weather)

    with RssSampler() as mem:
        t0 = time.perf_counter()
        table = studies.run_variants(build, params, weather, progress=True, **OPTIONS)
        t_study = time.perf_counter() - t0
    failed = int(table["error"].notna().sum())
    per = t_study / args.variants * 1e3
    print(f"study: {t_study:.2f} s = {per:.3f} ms per variant-year ({failed} failed); "
          f"{table.shape[1]} columns kept")
    print(f"memory: resident set +{(mem.peak - mem.start) / 1e6:.0f} MB at peak over the "
          f"{mem.start / 1e6:.0f} MB before the call")

    k = min(args.sample, args.variants)
    rows = params.iloc[np.linspace(0, args.variants - 1, k).astype(int)]
    t0 = time.perf_counter()
    ref = {i: one_at_a_time(r, weather) for i, r in zip(rows.index, rows.to_dict("records"),
                                                        strict=True)}
    t_one = (time.perf_counter() - t0) / k
    print(f"one at a time: {t_one * 1e3:.1f} ms per variant-year (sample of {k}) → "
          f"{t_one * args.variants:.0f} s for {args.variants}")
    print(f"ratio (one at a time / study): {t_one * 1e3 / per:.1f}×")
    worst = 0.0
    for i, d in ref.items():
        for key, v in d.items():
            worst = max(worst, abs(table.at[i, key] - v) / max(1.0, abs(v)))
    print(f"largest relative difference study vs one at a time: {worst:.1e}")


if __name__ == "__main__":
    main()
