"""Accuracy of window links against a fine solution of the same model (docs/airflow_engine.md).

One air node (fabric 35 W/K, gains 0.8·GHI + 250 W) with a window link on pvlib's shipped
Greensboro typical-year July (723170TYA.CSV), stepped hourly and on 15-minute steps, against
scipy's LSODA on the nonlinear ODE with the conductance re-evaluated continuously (inputs read
as the engine reads them: air temperature and wind linear between labels, gains held over each
hour). Prints the largest and mean absolute error of the room temperature at the hourly labels.

Run: ``python benchmarks/window_flow_accuracy.py`` (about 30 s).
"""

from __future__ import annotations

import pathlib

import numpy as np
import pvlib
from scipy.integrate import solve_ivp

import thermonet as tn
from thermonet.airflow import flow_law_coefficients, law_flow

CASES = [("de_gids_phaff", dict(area=0.6, height=1.2), c) for c in (2e5, 1e6, 5e6)] + [
    ("cross_wind", dict(area_1=0.3, area_2=0.3, cp_1=0.5, cp_2=-0.3), 1e6)]


def july():
    f = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
    w = tn.weather.read_tmy3(f)
    return w.loc[w.index.month == 7, ["temp_air", "wind_speed", "ghi"]]


def engine(w, law, kw, cap, step):
    net = tn.Network()
    net.add_node("room", kind="air", capacitance=cap)
    net.add_boundary("out", temperature="temp_air")
    net.add_link("room", "out", conductance=35.0, path="opaque")
    net.add_source("room", power=w["ghi"] * 0.8 + 250.0, path="solar")
    net.add_window_flow("room", "out", law=law, **kw)
    res = tn.simulate(net, w, step=step, warmup_days=0, interpolate=("temp_air", "wind_speed"))
    t = res.temperatures["room"].to_numpy()
    k = len(t) // len(w)
    return t[k - 1::k]


def fine(w, law, kw, cap, t_start):
    coef = flow_law_coefficients(law, **kw)
    te, u = w["temp_air"].to_numpy(), w["wind_speed"].to_numpy()
    q = (w["ghi"] * 0.8 + 250.0).to_numpy()

    def rhs(t, y):
        k = min(max(int(np.ceil(t / 3600.0 - 1e-12)), 1), len(te) - 1)
        a = t / 3600.0 - (k - 1)
        t_out = te[k - 1] + a * (te[k] - te[k - 1])
        g = 1200.0 * law_flow(coef, y[0], t_out, u[k - 1] + a * (u[k] - u[k - 1]))
        return [((35.0 + g) * (t_out - y[0]) + q[k]) / cap]

    sol = solve_ivp(rhs, (0.0, 3600.0 * (len(te) - 1)), [t_start], method="LSODA",
                    rtol=1e-10, atol=1e-10, t_eval=3600.0 * np.arange(len(te)), max_step=60.0)
    return sol.y[0]


def main():
    w = july()
    print(f"{'law':16s} {'C [J/K]':>9s}  {'hourly max/mean [K]':>20s}  "
          f"{'15 min max/mean [K]':>20s}")
    for law, kw, cap in CASES:
        cells = []
        for step in (None, "15min"):
            t = engine(w, law, kw, cap, step)
            err = np.abs(fine(w, law, kw, cap, t[0]) - t)[1:]
            cells.append(f"{err.max():.3f} / {err.mean():.4f}")
        print(f"{law:16s} {cap:9.0e}  {cells[0]:>20s}  {cells[1]:>20s}")


if __name__ == "__main__":
    main()
