"""How to step a temperature-dependent window airflow: error of per-step schemes (no assertions).

A one-node room (air + light contents) with an always-open window whose flow follows
de Gids & Phaff (1982) (thermonet.airflow.single_sided_de_gids_phaff: it depends on the room
temperature through the stack term) is run through a summer month of pvlib's Greensboro
typical year (pvlib/data/723170TYA.CSV, July), inputs held over each hour:

    C dT/dt = (H + G(T)) (T_e − T) + Φ,   G(T) = ρc_p · Q(T, T_e, U).

Within a step with G held constant the update is exact (the engine's zero-order hold):
T_end = T_eq + (T_0 − T_eq) e^(−a), a = (H + G)Δt/C, T_eq = T_e + Φ/(H + G).
The schemes differ only in which G is held:

* ``explicit``: G from the temperature at the start of the step;
* ``predictor-corrector``: G from the step mean of an explicit predictor, step redone;
* ``pc-iterated``: the corrector repeated until G changes by < 1e-6 relative (fixed point of
  G(step mean));
* ``pc-trapezoid``: G = ½(G(start) + G(predicted end)), step redone;
* ``predictor-corrector ×4 sub-steps``: the predictor-corrector on 15-min sub-steps, inputs
  held over the hour.

Reference: the same equation at 10 s steps with G re-evaluated every sub-step (checked against
5 s: the reference's own error is printed). Printed: the largest hourly error of the room
temperature at the end of each hour and of its hourly mean [K], over rooms of different time
constants. Run: ``python benchmarks/airflow_step_error.py``.
"""

from __future__ import annotations

import math
import pathlib

import numpy as np
import pvlib

from thermonet.airflow import flow_conductance, single_sided_de_gids_phaff
from thermonet.weather import read_tmy3

TMY3 = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"


def conductance(t_room, t_out, wind, area, height):
    """ρc_p·Q of de Gids & Phaff written out (fast scalar math for the 10 s reference)."""
    return 600.0 * area * math.sqrt(0.001 * wind * wind + 0.0035 * height * abs(t_room - t_out)
                                    + 0.01)


def check_conductance():
    """The written-out conductance equals thermonet.airflow's at a few points."""
    for t_room, t_out, wind in ((26.0, 18.0, 4.0), (19.0, 30.0, 0.0), (22.0, 22.0, 7.5)):
        ours = conductance(t_room, t_out, wind, 0.6, 1.2)
        lib = float(flow_conductance(single_sided_de_gids_phaff(0.6, 1.2, t_room, t_out, wind)))
        assert abs(ours - lib) <= 1e-12 * lib, (ours, lib)


def exact_step(t0, g_total, t_out, power, cap, dt):
    """End and mean temperature of one step with the conductance held."""
    a = g_total * dt / cap
    t_eq = t_out + power / g_total
    decay = math.exp(-a)
    return t_eq + (t0 - t_eq) * decay, t_eq + (t0 - t_eq) * (1.0 - decay) / a


def run(scheme, inputs, cap, h_fabric, area, height, dt=3600.0, sub=1):
    t_out, wind, power = inputs
    t = 24.0
    ends, means = [], []
    for te, u, phi in zip(t_out, wind, power, strict=True):
        mean_acc = 0.0
        for _ in range(sub):
            h = dt / sub
            g = conductance(t, te, u, area, height)
            end, mean = exact_step(t, h_fabric + g, te, phi, cap, h)
            if scheme == "pc-trapezoid":
                g = 0.5 * (g + conductance(end, te, u, area, height))
                end, mean = exact_step(t, h_fabric + g, te, phi, cap, h)
            elif scheme != "explicit":
                for _ in range(1 if scheme.startswith("predictor-corrector") else 50):
                    g_new = conductance(mean, te, u, area, height)
                    converged = abs(g_new - g) <= 1e-6 * g
                    g = g_new
                    end, mean = exact_step(t, h_fabric + g, te, phi, cap, h)
                    if converged:
                        break
            mean_acc += mean / sub
            t = end
        ends.append(t)
        means.append(mean_acc)
    return np.array(ends), np.array(means)


def main():
    check_conductance()
    wx = read_tmy3(TMY3).loc["2025-07-01 01:00":"2025-08-01 00:00"]
    inputs = (wx["temp_air"].to_numpy(), wx["wind_speed"].to_numpy(),
              (0.8 * wx["ghi"] + 250.0).to_numpy())
    area, height, h_fabric = 0.6, 1.2, 35.0
    print(f"July, {len(wx)} hours, window A = {area} m², H = {height} m (de Gids & Phaff); "
          f"fabric {h_fabric} W/K")
    for cap in (2e5, 1e6, 5e6):
        ref_end, ref_mean = run("explicit", inputs, cap, h_fabric, area, height, sub=360)
        chk_end, _ = run("explicit", inputs, cap, h_fabric, area, height, sub=720)
        tau = cap / (h_fabric + conductance(25.0, 20.0, 3.0, area, height)) / 3600.0
        print(f"\nC = {cap:.0e} J/K (τ ≈ {tau:.2f} h with the window); reference 10 s vs 5 s: "
              f"{np.abs(ref_end - chk_end).max():.1e} K")
        for scheme, sub in (("explicit", 1), ("predictor-corrector", 1), ("pc-iterated", 1),
                            ("pc-trapezoid", 1), ("predictor-corrector", 4)):
            end, mean = run(scheme, inputs, cap, h_fabric, area, height, sub=sub)
            if sub > 1:
                scheme = f"{scheme} ×{sub} sub-steps"
            print(f"  {scheme:36s} max |ΔT_end| = {np.abs(end - ref_end).max():.3f} K   "
                  f"max |ΔT_mean| = {np.abs(mean - ref_mean).max():.3f} K")


if __name__ == "__main__":
    main()
