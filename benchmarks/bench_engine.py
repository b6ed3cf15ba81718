"""Speed of the core engine against plain baselines, printed as ratios (no assertions).

Cases (each: thermonet median of several runs, baseline time, ratio, max temperature error):

1. A ~10-node room-year with a thermostat, vs a plain numpy loop of the exact ZOH step with
   the same superposition thermostat, and vs ``scipy.integrate.solve_ivp(method="BDF")`` on a
   3-day horizon, extrapolated to the year.
2. A ~2,000-node free-running year, vs a dense modal solution written with numpy/scipy
   (eigh, one first-order recursion per mode with ``scipy.signal.lfilter``, one product back).
3. A ~10,000-node year (``method="sparse"``, at the default accuracy and at
   ``sparse_tol=1e-3``), vs ``solve_ivp`` BDF with the sparse Jacobian on a 6-hour horizon,
   extrapolated; error against the same method at 1e-11 accuracy over a week.

Run: ``python benchmarks/bench_engine.py [--quick]``.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import scipy.integrate
import scipy.signal
import scipy.sparse as sp

sys.path.insert(0, str(Path(__file__).parent))
import networks  # noqa: E402

import thermonet as tn  # noqa: E402
from thermonet.engine.compile import compile_network, input_matrix, laplacian_blocks  # noqa: E402
from thermonet.engine.simulate import control_maps, discretise_exact, initial_state  # noqa: E402
from thermonet.engine.sparse import laplacian_sparse  # noqa: E402


def median_time(fn, runs):
    times = []
    out = None
    for _ in range(runs):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def room(thermostat=True):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("ground", temperature=9.0, kind="ground")
    net.add_node("air", kind="air", capacitance=1.5e5)
    for k, (c, g) in enumerate([(5e3, 120), (2e6, 300), (3e6, 250), (1e6, 40)]):
        net.add_node(f"w{k}", kind="mass", capacitance=c)
        net.add_link("air" if k == 0 else f"w{k-1}", f"w{k}", conductance=g, path="opaque")
    net.add_link("w3", "out", conductance=25.0, path="opaque")
    for k, (c, g) in enumerate([(4e3, 150), (6e6, 400), (8e6, 300)]):
        net.add_node(f"s{k}", kind="mass", capacitance=c)
        net.add_link("air" if k == 0 else f"s{k-1}", f"s{k}", conductance=g, path="ground")
    net.add_link("s2", "ground", conductance=20.0, path="ground")
    net.add_node("glass", kind="surface", capacitance=2e3)
    net.add_link("air", "glass", conductance=60.0, path="glazing")
    net.add_link("glass", "out", conductance=90.0, path="glazing")
    net.add_airflow("out", "air", flow_m3h=45.0, path="infiltration")
    net.add_source("air", power=250.0, path="internal")
    if thermostat:
        net.add_thermostat("air", heating_setpoint=20.0, cooling_setpoint=26.0)
    return net


def numpy_zoh_loop(net, w):
    """The plain baseline: exact ZOH matrices, then a Python loop of numpy mat-vecs."""
    comp = compile_network(net, w)
    d = discretise_exact(comp, comp.G_states[0])
    Rx, Ru, M = control_maps(comp, d)
    Phi, Gam = d.Phi, d.Gam
    pc = comp.nb + comp.nsrc + np.arange(comp.m)
    # the same start as thermonet: steady state of the first inputs, thermostat acting
    x = initial_state(comp, d, comp.U[0], comp.free, comp.hsp[0], comp.csp[0])
    out = np.empty((len(comp.U), comp.nc))
    for k, u in enumerate(comp.U):
        u = u.copy()
        x1 = Phi @ x + Gam @ u
        t0 = (Rx @ x1 + Ru @ u)[0]
        p = 0.0
        if t0 < comp.hsp[k, 0]:
            p = (comp.hsp[k, 0] - t0) / M[0, 0]
        elif t0 > comp.csp[k, 0]:
            p = -(t0 - comp.csp[k, 0]) / M[0, 0]
        x = x1 + Gam[:, pc[0]] * p
        out[k] = x
    return out


def bdf(net, w, hours, sparse=False):
    comp = compile_network(net, w.iloc[:hours])
    if sparse:
        L, Lfb = laplacian_sparse(comp, comp.G_states[0])
        E = sp.csr_matrix(input_matrix(comp, Lfb))
        A = (-sp.diags(1 / comp.C) @ L).tocsr()
        B = sp.diags(1 / comp.C) @ E
    else:
        Lff, Lfb = laplacian_blocks(comp, comp.G_states[0])
        E = input_matrix(comp, Lfb)
        A, B = -Lff / comp.C[:, None], E / comp.C[:, None]
    U, h = comp.U, comp.step_s

    def f(t, x):
        return A @ x + B @ U[min(int(t // h), len(U) - 1)]

    x0 = np.full(comp.nf, 15.0)
    t = time.perf_counter()
    scipy.integrate.solve_ivp(f, (0, hours * h), x0, method="BDF", jac=A, rtol=1e-6, atol=1e-6)
    return (time.perf_counter() - t) * 8760 / hours


def dense_modal_baseline(net, w):
    """A careful practitioner's exact solution: eigh + lfilter per mode + product back."""
    comp = compile_network(net, w)
    Lff, Lfb = laplacian_blocks(comp, comp.G_states[0])
    E = input_matrix(comp, Lfb)
    cs = np.sqrt(comp.C)
    lam, V = np.linalg.eigh(Lff / np.outer(cs, cs))
    Q = V / cs[:, None]
    h = comp.step_s
    a = np.exp(-lam * h)
    B = (comp.U @ (Q.T @ E).T) * (-np.expm1(-lam * h) / lam)
    x0 = np.linalg.solve(Lff, E @ comp.U[0])
    z0 = Q.T @ (comp.C * x0)
    Z = np.empty_like(B)
    for i in range(len(lam)):
        Z[:, i], _ = scipy.signal.lfilter([1.0], [1.0, -a[i]], B[:, i], zi=[a[i] * z0[i]])
    return Z @ Q.T


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--quick", action="store_true", help="smaller cases, fewer runs")
    args = p.parse_args(argv)
    runs = 3 if args.quick else 5
    w = networks.weather()

    print("case 1: room-year (~10 nodes) with a thermostat")
    net = room()
    tn.simulate(net, w, warmup_days=0)  # compile the loop once
    t_tn, res = median_time(lambda: tn.simulate(net, w, warmup_days=0), runs)
    t_np, ref = median_time(lambda: numpy_zoh_loop(net, w), max(1, runs // 2))
    free = [n for n in net.nodes if net.nodes[n].capacitance > 0]
    err = np.abs(res.temperatures[free].to_numpy() - ref).max()
    t_bdf = bdf(room(thermostat=False), w, 72)
    print(f"  nodes {len(net.nodes)}  thermonet {t_tn * 1e3:.2f} ms  numpy ZOH loop "
          f"{t_np * 1e3:.1f} ms  ratio {t_np / t_tn:.1f}x  |  solve_ivp BDF (3 days, "
          f"extrapolated) {t_bdf:.1f} s  ratio {t_bdf / t_tn:.0f}x  |  max error vs numpy "
          f"loop {err:.2e} K")

    print("case 2: ~2,000-node free-running year")
    big = networks.many_rooms(60 if args.quick else 118, layers=8)
    w2 = w
    t_tn, res = median_time(lambda: tn.simulate(big, w2, warmup_days=0).temperatures, 1 if
                            args.quick else 3)
    t_base, ref = median_time(lambda: dense_modal_baseline(big, w2), 1)
    comp = compile_network(big, w2.iloc[:2])
    err = np.abs(res[comp.free].to_numpy() - ref).max()
    print(f"  nodes {len(big.nodes)}  thermonet {t_tn:.2f} s  dense modal numpy/scipy "
          f"{t_base:.2f} s  speed ratio {t_base / t_tn:.2f} (goal ≥ 0.5)  max |ΔT| {err:.2e} K")

    print("case 3: ~10,000-node year, method='sparse'")
    huge = networks.many_rooms(120 if args.quick else 600, layers=8)
    hours = 24 * 30 if args.quick else 8760
    wy = w.iloc[:hours]
    week = w.iloc[:168]
    ref = tn.simulate(huge, week, method="sparse", warmup_days=0,
                      sparse_tol=1e-11).temperatures.to_numpy()
    t_bdf = bdf(huge, w, 6, sparse=True)
    # the default accuracy target, then the budget (a year at <= 0.01 K)
    for tol in (None, 1e-3):
        t_sp, res = median_time(lambda tol=tol: tn.simulate(huge, wy, method="sparse",
                                                            warmup_days=0, sparse_tol=tol), 1)
        t_sp_year = t_sp * 8760 / hours
        a = tn.simulate(huge, week, method="sparse", warmup_days=0, sparse_tol=tol)
        err = np.abs(a.temperatures.to_numpy() - ref).max()
        label = "default sparse_tol" if tol is None else f"sparse_tol={tol:g}"
        print(f"  nodes {len(huge.nodes)}  {label}: thermonet {t_sp_year:.1f} s/year "
              f"(degree {res.info['rational_degree']}, bound {res.info['exp_error_bound']:.1e})"
              f"  solve_ivp BDF (6 h, extrapolated) {t_bdf:.0f} s  ratio "
              f"{t_bdf / t_sp_year:.0f}x  |  max |ΔT| vs 1e-11 reference (1 week) {err:.2e} K")


if __name__ == "__main__":
    main()
